import { NotBuiltYet } from '../../components/NotBuiltYet';

export default function ReviewDeskScreen() {
  return (
    <NotBuiltYet title="Review desk" purpose="Disputes to resolve and visits to countersign." />
  );
}
