import {
  ClinicalInputError,
  type ScotomaRegion,
  fieldMeta,
  prismDioptresToDegrees,
  suppressionScotomaRegion,
} from '@fuselight/shared';
import { EyeChoice } from '../../../components/controls';
import { type BenchFields, benchFields, useBenchSection } from '../../../data/bench';
import { BenchTextField } from '../BenchFields';
import { type DeckCell, MeasureDeck } from '../MeasureDeck';
import { StepFrame } from '../StepFrame';
import { ScotomaMap } from './ScotomaMap';

const meta = fieldMeta.suppressionScotoma;
const UP_DOWN = {
  positive: { short: 'up', spoken: 'up' },
  negative: { short: 'down', spoken: 'down' },
};
type Scotoma = BenchFields<'suppressionScotoma'>;

export function scotomaRegionOf(
  scotoma: Scotoma,
  angles: BenchFields<'amblyoscopeAngles'>,
): { region: ScotomaRegion | null; problem: string | null } {
  const a = scotoma.horizontalLostConvergentDeg;
  const b = scotoma.horizontalLostDivergentDeg;
  if (scotoma.deviatingEye == null || a == null || b == null)
    return { region: null, problem: null };
  if (angles.objectiveHorizontalDeg == null) {
    return {
      region: null,
      problem:
        'Record the objective angle first: the map is centred on where the fovea points, which the objective angle gives.',
    };
  }
  const up = scotoma.verticalLostUpperDeg;
  const down = scotoma.verticalLostLowerDeg;
  try {
    return {
      region: suppressionScotomaRegion({
        eye: scotoma.deviatingEye,
        objectiveHorizontalDeg: angles.objectiveHorizontalDeg,
        ...(angles.objectiveVerticalPd == null
          ? {}
          : { objectiveVerticalDeg: prismDioptresToDegrees(angles.objectiveVerticalPd) }),
        horizontalLostDeg: [a, b],
        ...(up != null && down != null ? { verticalLostDeg: [up, down] as const } : {}),
      }),
      problem: null,
    };
  } catch (error) {
    if (error instanceof ClinicalInputError) return { region: null, problem: error.message };
    throw error;
  }
}

export function ScotomaStep({ visitId }: { visitId: string }) {
  const section = useBenchSection(visitId, 'suppressionScotoma');
  const { fields, save } = section;
  const angles = benchFields(section.bundle, 'amblyoscopeAngles');
  const { region, problem } = scotomaRegionOf(fields, angles);
  const horizontal = (
    field: 'horizontalLostConvergentDeg' | 'horizontalLostDivergentDeg',
    short: string,
    defaultSign: 1 | -1,
  ): DeckCell => ({
    field,
    label: meta[field].label,
    short,
    axis: 'horizontal',
    unit: 'deg',
    min: meta[field].min ?? -90,
    max: meta[field].max ?? 90,
    defaultSign,
    hint: 'position on the horizontal scale',
    value: fields[field] ?? null,
    // Each side is measured moving out from the objective angle.
    start: angles.objectiveHorizontalDeg ?? null,
    mark: 'markLost',
  });
  const vertical = (
    field: 'verticalLostUpperDeg' | 'verticalLostLowerDeg',
    short: string,
    defaultSign: 1 | -1,
  ): DeckCell => ({
    field,
    label: meta[field].label,
    short,
    axis: 'vertical',
    unit: 'deg',
    min: meta[field].min ?? -90,
    max: meta[field].max ?? 90,
    defaultSign,
    signWords: UP_DOWN,
    hint: 'degrees on the vertical control',
    value: fields[field] ?? null,
    mark: 'markLost',
  });
  const cells = [
    horizontal('horizontalLostConvergentDeg', 'Convergent side', 1),
    horizontal('horizontalLostDivergentDeg', 'Divergent side', -1),
    vertical('verticalLostUpperDeg', 'Upper', 1),
    vertical('verticalLostLowerDeg', 'Lower', -1),
  ];
  return (
    <StepFrame
      className="fl-bench-scotoma"
      title="Suppression scotoma"
      section={section}
      instructions={
        <p>
          With the simultaneous perception slides at the objective angle, move the tube before the
          deviating eye each way until the picture is lost. Those positions bound the scotoma; the
          vertical control bounds it up and down.
        </p>
      }
    >
      <div className="fl-bench-row">
        <EyeChoice
          label={meta.deviatingEye.label}
          value={fields.deviatingEye ?? null}
          onChange={(value) => void save({ deviatingEye: value })}
        />
        <BenchTextField
          label={meta.slideUsed.label}
          value={fields.slideUsed}
          onSave={(value) => void save({ slideUsed: value })}
        />
      </div>
      <MeasureDeck
        title="Where the picture was lost"
        cells={cells}
        onChange={(field, value) => void save({ [field]: value })}
        aside={
          <>
            <ScotomaMap region={region} />
            {problem ? (
              <p className="fl-field-error" role="alert">
                {problem}
              </p>
            ) : null}
          </>
        }
      />
    </StepFrame>
  );
}
