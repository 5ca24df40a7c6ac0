import { NotBuiltYet } from '../../components/NotBuiltYet';

export default function FleetScreen() {
  return (
    <NotBuiltYet
      title="Fleet"
      purpose="Enrolled tablets: register, see status, revoke or retire."
    />
  );
}
