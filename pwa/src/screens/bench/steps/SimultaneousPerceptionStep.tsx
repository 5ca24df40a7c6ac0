import { fieldMeta } from '@fuselight/shared';
import { EyeChoice, TriStateChoice } from '../../../components/controls';
import { useBenchSection } from '../../../data/bench';
import { BenchTextField } from '../BenchFields';
import { StepFrame } from '../StepFrame';
import { BsvCheck } from './BsvCheck';

const meta = fieldMeta.simultaneousPerception;

export function SimultaneousPerceptionStep({ visitId }: { visitId: string }) {
  const section = useBenchSection(visitId, 'simultaneousPerception');
  const { fields, save } = section;
  return (
    <StepFrame
      title="Simultaneous perception"
      section={section}
      instructions={
        <p>
          Show the two different pictures, one to each eye. Both seen together: present. One
          missing: that eye is suppressing.
        </p>
      }
    >
      <TriStateChoice
        label="Both pictures seen together?"
        value={fields.result ?? null}
        onChange={(value) =>
          void save(
            value === 'absent' ? { result: value } : { result: value, suppressingEye: null },
          )
        }
      />
      {fields.result === 'absent' ? (
        <EyeChoice<'right' | 'left' | 'alternating'>
          label={`${meta.suppressingEye.label} (whose picture is missing)`}
          allowAlternating
          value={fields.suppressingEye ?? null}
          onChange={(value) => void save({ suppressingEye: value })}
        />
      ) : null}
      <BenchTextField
        label={meta.slideUsed.label}
        value={fields.slideUsed}
        onSave={(value) => void save({ slideUsed: value })}
      />
      <BsvCheck visitId={visitId} overrides={{ simultaneousPerception: fields }} />
    </StepFrame>
  );
}
