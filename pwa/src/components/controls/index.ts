// Large touch controls for the Bench and the Visit screens.
export { AngleControl, type AngleControlProps } from './AngleControl';
export { ChoiceGroup, type ChoiceGroupProps, type ChoiceOption } from './ChoiceGroup';
export { TriStateChoice, TRI_STATE_OPTIONS, type TriStateChoiceProps } from './TriStateChoice';
export { EyeChoice, type EyeChoiceProps, type EyeValue } from './EyeChoice';
export { YesNoChoice, type YesNoChoiceProps } from './YesNoChoice';
export { ConversionContext } from './conversion-context';
export {
  type AngleAxis,
  type AngleUnit,
  type SignWords,
  SIGN_WORDS,
  describeReading,
  otherUnitReading,
} from './angle-format';
