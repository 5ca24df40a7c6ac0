// What a tablet shows after the clinic revoked or retired it and it erased its data.
import { useNavigate } from 'react-router-dom';
import type { ErasureNote } from '../../auth/tablet-erasure';
import { useAuthActions } from '../../auth/useAuthActions';
import { Button, Notice } from '../../auth/ui/controls';
import { IdentityPage } from '../../auth/ui/IdentityPage';

export default function TabletErasedScreen({ note }: { note: ErasureNote }) {
  const actions = useAuthActions();
  const navigate = useNavigate();
  return (
    <IdentityPage
      title={note.cause === 'revoked' ? 'This tablet was revoked' : 'This tablet was retired'}
    >
      <Notice tone="warning">{note.message}</Notice>
      <p>
        Erased on {new Date(note.at).toLocaleString()}. No patient record, Outbox entry or sign-in
        is left on this tablet. To use it again, ask an admin for a new enrolment code.
      </p>
      <Button
        onClick={() => {
          actions.dismissErasure();
          navigate('/enrol', { replace: true });
        }}
      >
        Enrol this tablet again
      </Button>
    </IdentityPage>
  );
}
