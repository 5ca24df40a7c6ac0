import { NotBuiltYet } from '../../components/NotBuiltYet';

export default function OutboxScreen() {
  return (
    <NotBuiltYet
      title="Outbox"
      purpose="Edits saved on this tablet that are waiting to reach the clinic server."
    />
  );
}
