import type { BsvResult } from '@fuselight/shared';
import { ChoiceGroup, type ChoiceGroupProps } from './ChoiceGroup';

/** Present / absent / not tested, the three ways a BSV grade is recorded. */
export const TRI_STATE_OPTIONS = [
  { value: 'present', label: 'Present' },
  { value: 'absent', label: 'Absent' },
  { value: 'notTested', label: 'Not tested' },
] as const satisfies readonly { value: BsvResult; label: string }[];

export type TriStateChoiceProps = Omit<ChoiceGroupProps<BsvResult>, 'options'>;

export function TriStateChoice(props: TriStateChoiceProps) {
  return <ChoiceGroup {...props} options={TRI_STATE_OPTIONS} />;
}
