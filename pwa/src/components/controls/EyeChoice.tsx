import { ChoiceGroup, type ChoiceGroupProps } from './ChoiceGroup';

export type EyeValue = 'right' | 'left' | 'alternating';

const EYES = [
  { value: 'right', label: 'Right eye' },
  { value: 'left', label: 'Left eye' },
] as const;
const ALTERNATING = { value: 'alternating', label: 'Alternating' } as const;

export interface EyeChoiceProps<V extends EyeValue> extends Omit<ChoiceGroupProps<V>, 'options'> {
  /** Offer "Alternating" as a third answer (fixing eye, suppressing eye). */
  allowAlternating?: V extends 'alternating' ? boolean : never;
}

/** Right eye / left eye (optionally alternating), as large buttons. */
export function EyeChoice<V extends EyeValue = 'right' | 'left'>({
  allowAlternating,
  ...props
}: EyeChoiceProps<V>) {
  const options = (allowAlternating ? [...EYES, ALTERNATING] : EYES) as unknown as readonly {
    value: V;
    label: string;
  }[];
  return <ChoiceGroup {...props} options={options} />;
}
