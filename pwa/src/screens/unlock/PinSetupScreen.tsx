// After an online sign-in on an enrolled tablet: choose a PIN for unlocking offline.
import { zodResolver } from '@hookform/resolvers/zod';
import { useMutation } from '@tanstack/react-query';
import { useForm } from 'react-hook-form';
import { useNavigate } from 'react-router-dom';
import { pinSetupSchema, type PinSetup } from '../../auth/pin-schemas';
import { useAuthState } from '../../auth/SessionProvider';
import { useAuthActions } from '../../auth/useAuthActions';
import { Button, Notice, TextField, describeError } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';

export default function PinSetupScreen() {
  const { policy, tablet } = useAuthState();
  const actions = useAuthActions();
  const navigate = useNavigate();
  const {
    register,
    handleSubmit,
    formState: { errors },
  } = useForm<PinSetup>({
    resolver: zodResolver(pinSetupSchema),
    defaultValues: { pin: '', confirm: '' },
  });
  const save = useMutation({
    mutationFn: (form: PinSetup) => actions.setPin(form.pin),
    onSuccess: () => navigate('/', { replace: true }),
  });

  if (!tablet) {
    return (
      <IdentityPage title="PIN for offline use">
        <Notice>A PIN unlocks an enrolled tablet only. This browser is not enrolled.</Notice>
        <Button onClick={() => navigate('/', { replace: true })}>Continue</Button>
      </IdentityPage>
    );
  }
  return (
    <IdentityPage title="PIN for offline use">
      <p>
        With a PIN you can unlock this tablet without the network for {policy.offlineUnlockHours}{' '}
        hours after the clinic server last saw you. After {policy.maxPinAttempts} wrong PINs you
        will need your password again.
      </p>
      <form noValidate aria-label="Set a PIN" onSubmit={handleSubmit((form) => save.mutate(form))}>
        <TextField
          label="New PIN (at least 6 digits)"
          type="password"
          inputMode="numeric"
          autoComplete="off"
          error={errors.pin?.message}
          {...register('pin')}
        />
        <TextField
          label="The same PIN again"
          type="password"
          inputMode="numeric"
          autoComplete="off"
          error={errors.confirm?.message}
          {...register('confirm')}
        />
        {save.isError ? <Notice tone="error">{describeError(save.error)}</Notice> : null}
        <div className="fl-id-row">
          <Button type="submit" disabled={save.isPending}>
            {save.isPending ? 'Saving…' : 'Save PIN'}
          </Button>
          <Button
            tone="quiet"
            onClick={() => {
              actions.declinePin();
              navigate('/', { replace: true });
            }}
          >
            Not now
          </Button>
        </div>
      </form>
    </IdentityPage>
  );
}
