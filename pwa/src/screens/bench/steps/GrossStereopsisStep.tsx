import { fieldMeta } from '@fuselight/shared';
import { useBenchSection } from '../../../data/bench';
import { BenchTextField } from '../BenchFields';
import { StepFrame } from '../StepFrame';
import { BsvCheck } from './BsvCheck';
import { StereoTrialRunner } from './StereoTrialRunner';

export function GrossStereopsisStep({
  visitId,
  random,
}: {
  visitId: string;
  random?: () => number;
}) {
  const section = useBenchSection(visitId, 'grossStereopsis');
  const { fields, save } = section;
  return (
    <StepFrame
      title="Gross stereopsis"
      section={section}
      instructions={
        <p>
          Show the stereo pair in the order below; the patient says whether the picture stands out
          toward or away from them. Presence only: each answer is a forced choice.
        </p>
      }
    >
      <StereoTrialRunner
        trials={fields.trials ?? []}
        onRecord={(trials) => void save({ trials })}
        {...(random ? { random } : {})}
        beside={
          <BenchTextField
            label={fieldMeta.grossStereopsis.slideUsed.label}
            value={fields.slideUsed}
            onSave={(value) => void save({ slideUsed: value })}
          />
        }
      />
      <BsvCheck visitId={visitId} overrides={{ grossStereopsis: fields }} />
    </StepFrame>
  );
}
