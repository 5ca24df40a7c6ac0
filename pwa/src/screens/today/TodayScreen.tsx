import { NotBuiltYet } from '../../components/NotBuiltYet';

export default function TodayScreen() {
  return (
    <NotBuiltYet title="Today" purpose="The patients booked or seen today at this tablet's site." />
  );
}
