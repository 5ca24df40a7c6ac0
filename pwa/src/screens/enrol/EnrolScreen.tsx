// Enrolling this tablet with the clinic: the code an admin registered on the Fleet screen, typed
// or scanned from its QR code. The tablet keeps its device secret in its own identity database.
import { zodResolver } from '@hookform/resolvers/zod';
import { useMutation } from '@tanstack/react-query';
import { useCallback, useState } from 'react';
import { useForm } from 'react-hook-form';
import { useLocation, useNavigate } from 'react-router-dom';
import { z } from 'zod';
import { useAuthState } from '../../auth/SessionProvider';
import { useAuthActions } from '../../auth/useAuthActions';
import { Button, Notice, TextField, describeError } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';
import { codeInLink, normaliseCode, parseEnrolmentPayload } from './enrolment-payload';
import { QrScanner } from './QrScanner';

export const enrolFormSchema = z.object({
  code: z
    .string()
    .min(1, { error: 'Enter the enrolment code from the Fleet screen' })
    .refine((code) => normaliseCode(code) !== null, {
      error: 'An enrolment code is letters and digits only',
    }),
});
type EnrolForm = z.infer<typeof enrolFormSchema>;

export default function EnrolScreen() {
  const location = useLocation();
  const { tablet } = useAuthState();
  const actions = useAuthActions();
  const navigate = useNavigate();
  const [scanning, setScanning] = useState(false);
  const [scanProblem, setScanProblem] = useState<string | null>(null);
  const {
    register,
    handleSubmit,
    setValue,
    formState: { errors },
  } = useForm<EnrolForm>({
    resolver: zodResolver(enrolFormSchema),
    defaultValues: { code: codeInLink(location.hash, location.search) ?? '' },
  });
  const enrol = useMutation({
    mutationFn: (code: string) => actions.enrol(code),
    onSuccess: () => navigate('/signin', { replace: true }),
  });
  const onScanned = useCallback(
    (text: string) => {
      const code = parseEnrolmentPayload(text);
      setScanning(false);
      if (!code) {
        setScanProblem('That QR code is not a Fuselight enrolment code.');
        return;
      }
      setScanProblem(null);
      setValue('code', code, { shouldValidate: true });
      enrol.mutate(code);
    },
    [enrol, setValue],
  );

  return (
    <IdentityPage title="Enrol this tablet">
      <p>
        An admin registers the tablet on the Fleet screen and gets a one-time code with a QR code.
        Scan it with this tablet&apos;s camera, or type the code.
      </p>
      {tablet ? (
        <Notice tone="warning">
          This tablet is already enrolled. Enrolling it again replaces its credentials; the clinic
          ends the old enrolment.
        </Notice>
      ) : null}
      {scanning ? (
        <QrScanner onCode={onScanned} onClose={() => setScanning(false)} />
      ) : (
        <Button tone="quiet" onClick={() => setScanning(true)}>
          Scan the QR code
        </Button>
      )}
      {scanProblem ? <Notice tone="error">{scanProblem}</Notice> : null}
      <form
        noValidate
        aria-label="Enrol with a code"
        onSubmit={handleSubmit((form) => enrol.mutate(normaliseCode(form.code)!))}
        style={{ marginTop: 16 }}
      >
        <TextField
          label="Enrolment code"
          autoComplete="off"
          autoCapitalize="characters"
          spellCheck={false}
          error={errors.code?.message}
          {...register('code')}
        />
        {enrol.isError ? <Notice tone="error">{describeError(enrol.error)}</Notice> : null}
        {enrol.isSuccess ? <Notice>This tablet is enrolled. Sign in next.</Notice> : null}
        <Button type="submit" disabled={enrol.isPending}>
          {enrol.isPending ? 'Enrolling…' : 'Enrol'}
        </Button>
      </form>
    </IdentityPage>
  );
}
