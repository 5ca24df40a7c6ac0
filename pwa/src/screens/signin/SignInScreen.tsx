// Full online sign-in with e-mail and password. On an enrolled tablet the session is bound to
// the tablet; afterwards the person is offered a PIN for offline unlock.
import { useMutation } from '@tanstack/react-query';
import { useForm, type Resolver } from 'react-hook-form';
import { Link, useNavigate, useSearchParams } from 'react-router-dom';
import { useAuthState } from '../../auth/SessionProvider';
import { useAuthActions } from '../../auth/useAuthActions';
import { Button, Notice, TextField, describeError } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';

import type { SignInForm } from './sign-in-form';

// The form's zod schema (and zod) load at the first Sign in press, not with the first screen:
// a sign-in needs the network anyway, and the app's files are precached once installed.
const signInResolver: Resolver<SignInForm> = async (values, context, options) => {
  const [{ zodResolver }, { signInFormSchema }] = await Promise.all([
    import('@hookform/resolvers/zod'),
    import('./sign-in-form'),
  ]);
  return zodResolver(signInFormSchema)(values, context, options);
};

export default function SignInScreen() {
  const [params] = useSearchParams();
  const { tablet, people, prompts } = useAuthState();
  const actions = useAuthActions();
  const navigate = useNavigate();
  const {
    register,
    handleSubmit,
    formState: { errors },
  } = useForm<SignInForm>({
    resolver: signInResolver,
    defaultValues: { email: params.get('email') ?? '', password: '' },
  });
  const signIn = useMutation({
    mutationFn: (form: SignInForm) => actions.signIn(form),
    // Home decides where next: the PIN offer on an enrolled tablet, else the person's home.
    onSuccess: () => navigate('/', { replace: true }),
  });
  const unlockable = people.some((p) => p.canUnlockWithPin);

  return (
    <IdentityPage title="Sign in">
      <p>
        {tablet
          ? 'Sign in with your Fuselight e-mail address and password. This tablet is enrolled with the clinic.'
          : 'Sign in with your Fuselight e-mail address and password. This browser is not an enrolled tablet: you can use the desk screens, but clinical work needs an enrolled tablet.'}
      </p>
      {prompts.length > 0 ? (
        <Notice tone="warning">
          {prompts.map((p) => `${p.name} needs to sign in again: ${p.reason}`).join(' ')}
        </Notice>
      ) : null}
      <form noValidate onSubmit={handleSubmit((form) => signIn.mutate(form))} aria-label="Sign in">
        <TextField
          label="E-mail address"
          type="email"
          autoComplete="username"
          inputMode="email"
          error={errors.email?.message}
          {...register('email')}
        />
        <TextField
          label="Password"
          type="password"
          autoComplete="current-password"
          error={errors.password?.message}
          {...register('password')}
        />
        {signIn.isError ? <Notice tone="error">{describeError(signIn.error)}</Notice> : null}
        <div className="fl-id-row">
          <Button type="submit" disabled={signIn.isPending}>
            {signIn.isPending ? 'Signing in…' : 'Sign in'}
          </Button>
          {unlockable ? (
            <Link to="/unlock" className="fl-id-button" data-tone="quiet">
              Unlock with a PIN
            </Link>
          ) : null}
          {!tablet ? (
            <Link to="/enrol" className="fl-id-button" data-tone="quiet">
              Enrol this tablet
            </Link>
          ) : null}
        </div>
      </form>
    </IdentityPage>
  );
}
