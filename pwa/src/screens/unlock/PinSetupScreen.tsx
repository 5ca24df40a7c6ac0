// After an online sign-in on an enrolled tablet: choose a PIN for unlocking offline. On a tablet
// whose screen lock has a platform authenticator, the PIN is combined with its hardware share
// (the tablet asks to confirm with the screen lock on saving); on one without, the clinic's
// rule for such tablets applies: PIN only, or a passphrase (docs/threat-model.md).
import { zodResolver } from '@hookform/resolvers/zod';
import type { UnlockWithoutHardware } from '@fuselight/shared/admin-views';
import { useMutation, useQuery } from '@tanstack/react-query';
import { useMemo } from 'react';
import { useForm } from 'react-hook-form';
import { useNavigate } from 'react-router-dom';
import { pinSetupSchema, type PinSetup } from '../../auth/pin-schemas';
import { describeRule, secretShortfall } from '../../auth/secret-policy';
import { useAuthState } from '../../auth/SessionProvider';
import { useAuthActions } from '../../auth/useAuthActions';
import { Button, Notice, TextField, describeError } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';

/** The PIN rule, with the clinic's passphrase rule added where it applies. */
function setupSchemaFor(passphrase: UnlockWithoutHardware | null) {
  if (!passphrase) return pinSetupSchema;
  return pinSetupSchema.superRefine((value, context) => {
    const missing = secretShortfall(value.pin, passphrase);
    if (missing) context.addIssue({ code: 'custom', path: ['pin'], message: missing });
  });
}

function Explanation({
  hardware,
  rule,
}: {
  hardware: boolean | undefined;
  rule: UnlockWithoutHardware;
}) {
  if (hardware === undefined) return <p role="status">Checking this tablet’s screen lock…</p>;
  if (hardware)
    return (
      <p>
        This tablet’s screen lock has security hardware: your PIN opens the tablet’s data only
        together with it, so a copy of the tablet cannot be opened by trying PINs. When you save,
        the tablet asks you to confirm with its screen lock (fingerprint, face or device PIN).
      </p>
    );
  if (rule.rule === 'passphrase')
    return (
      <p>
        This tablet has no security hardware to guard a PIN, so the clinic asks for{' '}
        {describeRule(rule)}.
      </p>
    );
  return (
    <p>
      This tablet has no security hardware to guard a PIN: someone who copies its storage could try
      every PIN. Your clinic accepts this; a passphrase of 12 or more characters resists it.
    </p>
  );
}

export default function PinSetupScreen() {
  const { policy, tablet, people, activeUser } = useAuthState();
  const me = people.find((person) => person.user.id === activeUser?.id);
  const actions = useAuthActions();
  const navigate = useNavigate();
  const hardware = useQuery({
    queryKey: ['tablet', 'hardware-key'],
    queryFn: () => actions.hardwareKeyAvailable(),
    staleTime: Infinity,
    enabled: !!tablet,
  });
  const rule = policy.unlockWithoutHardware;
  const passphrase = hardware.data === false && rule.rule === 'passphrase' ? rule : null;
  const schema = useMemo(() => setupSchemaFor(passphrase), [passphrase]);
  const {
    register,
    handleSubmit,
    formState: { errors },
  } = useForm<PinSetup>({
    resolver: zodResolver(schema),
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
  const word = passphrase ? 'passphrase' : 'PIN';
  return (
    <IdentityPage title="PIN for offline use">
      <p>
        With a {word} you can unlock this tablet without the network for {policy.offlineUnlockHours}{' '}
        hours after the clinic server last saw you. After {policy.maxPinAttempts} wrong tries you
        will need your password again.
      </p>
      {me?.pinHardwareRefused ? (
        <Notice tone="warning">
          Last time, this tablet’s screen lock did not confirm you when you typed your PIN. If the
          key it kept for your PIN is gone (for example after the screen lock was reset), set your
          PIN again here: the old one cannot open the tablet without it.
        </Notice>
      ) : null}
      <Explanation hardware={hardware.isError ? false : hardware.data} rule={rule} />
      <form noValidate aria-label="Set a PIN" onSubmit={handleSubmit((form) => save.mutate(form))}>
        <TextField
          label={
            passphrase
              ? `New passphrase (at least ${passphrase.minLength} characters)`
              : 'New PIN (at least 6 digits)'
          }
          type="password"
          inputMode={passphrase ? 'text' : 'numeric'}
          autoComplete="off"
          error={errors.pin?.message}
          {...register('pin')}
        />
        <TextField
          label={`The same ${word} again`}
          type="password"
          inputMode={passphrase ? 'text' : 'numeric'}
          autoComplete="off"
          error={errors.confirm?.message}
          {...register('confirm')}
        />
        {save.isError ? <Notice tone="error">{describeError(save.error)}</Notice> : null}
        <div className="fl-id-row">
          <Button type="submit" disabled={save.isPending || hardware.isPending}>
            {save.isPending ? 'Saving…' : `Save ${word}`}
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
