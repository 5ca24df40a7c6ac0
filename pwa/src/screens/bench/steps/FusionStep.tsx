import { fieldMeta } from '@fuselight/shared';
import { TriStateChoice, YesNoChoice } from '../../../components/controls';
import { type BenchFields, useBenchSection } from '../../../data/bench';
import { BenchTextField } from '../BenchFields';
import { StepFrame } from '../StepFrame';
import { BsvCheck } from './BsvCheck';

const meta = fieldMeta.fusion;

/** A single picture missing a control mark is suppression of that eye, not fusion. */
export function missingMarkMessage(fusion: BenchFields<'fusion'>): string | null {
  const missing = [
    fusion.rightMarkSeen === false ? 'right' : null,
    fusion.leftMarkSeen === false ? 'left' : null,
  ].filter((eye): eye is 'right' | 'left' => eye !== null);
  if (missing.length === 0) return null;
  const which =
    missing.length === 2
      ? 'Neither control mark was seen'
      : `The ${missing[0]} control mark was not seen`;
  const eyes = missing.length === 2 ? 'both eyes' : `the ${missing[0]} eye`;
  return `${which}: a single picture missing a mark is suppression of ${eyes}, not fusion.`;
}

export function FusionStep({ visitId }: { visitId: string }) {
  const section = useBenchSection(visitId, 'fusion');
  const { fields, save } = section;
  const suppression = missingMarkMessage(fields);
  return (
    <StepFrame
      title="Fusion"
      section={section}
      instructions={
        <p>
          Show the fusion pair: one common picture, a small control mark seen only by the right eye
          and another only by the left. One picture with both marks is fusion.
        </p>
      }
    >
      <div className="fl-bench-grid">
        <YesNoChoice
          label={meta.rightMarkSeen.label}
          words={{ yes: 'Seen', no: 'Not seen' }}
          value={fields.rightMarkSeen ?? null}
          onChange={(value) => void save({ rightMarkSeen: value })}
        />
        <YesNoChoice
          label={meta.leftMarkSeen.label}
          words={{ yes: 'Seen', no: 'Not seen' }}
          value={fields.leftMarkSeen ?? null}
          onChange={(value) => void save({ leftMarkSeen: value })}
        />
      </div>
      {suppression ? (
        <div className="fl-bench-warning" role="alert">
          <p>{suppression}</p>
          {fields.result === 'present' ? (
            <p>
              <strong>Fusion is recorded as present.</strong> Check the marks, or record fusion as
              absent.{' '}
              <button
                type="button"
                className="fl-touch fl-button"
                onClick={() => void save({ result: 'absent' })}
              >
                Record fusion absent
              </button>
            </p>
          ) : null}
        </div>
      ) : null}
      <TriStateChoice
        label={meta.result.label}
        value={fields.result ?? null}
        onChange={(value) => void save({ result: value })}
      />
      <BenchTextField
        label={meta.slideUsed.label}
        value={fields.slideUsed}
        onSave={(value) => void save({ slideUsed: value })}
      />
      <BsvCheck visitId={visitId} overrides={{ fusion: fields }} />
    </StepFrame>
  );
}
