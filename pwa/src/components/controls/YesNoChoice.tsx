import { ChoiceGroup, type ChoiceGroupProps } from './ChoiceGroup';

type YesNo = 'yes' | 'no';
const OPTIONS = [
  { value: 'yes', label: 'Yes' },
  { value: 'no', label: 'No' },
] as const;

export interface YesNoChoiceProps extends Omit<
  ChoiceGroupProps<YesNo>,
  'options' | 'value' | 'onChange'
> {
  value: boolean | null;
  onChange: (value: boolean | null) => void;
  /** Words for yes and no when plain Yes / No would be unclear, e.g. "Seen" / "Not seen". */
  words?: { yes: string; no: string };
}

/** A recorded yes / no fact; null is "not recorded", never a guessed no. */
export function YesNoChoice({ value, onChange, words, ...props }: YesNoChoiceProps) {
  const options = words
    ? [
        { value: 'yes' as const, label: words.yes },
        { value: 'no' as const, label: words.no },
      ]
    : OPTIONS;
  return (
    <ChoiceGroup
      {...props}
      options={options}
      value={value === null ? null : value ? 'yes' : 'no'}
      onChange={(next) => onChange(next === null ? null : next === 'yes')}
    />
  );
}
