import {
  ClinicalInputError,
  type ScotomaRegion,
  fieldMeta,
  prismDioptresToDegrees,
  suppressionScotomaRegion,
} from '@fuselight/shared';
import { AngleControl, EyeChoice } from '../../../components/controls';
import { type BenchFields, benchFields, useBenchSection } from '../../../data/bench';
import { BenchTextField } from '../BenchFields';
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
  const control = (
    name:
      | 'horizontalLostConvergentDeg'
      | 'horizontalLostDivergentDeg'
      | 'verticalLostUpperDeg'
      | 'verticalLostLowerDeg',
    axis: 'horizontal' | 'vertical',
    defaultSign: 1 | -1,
  ) => (
    <AngleControl
      label={meta[name].label}
      axis={axis === 'horizontal' ? 'horizontal' : 'vertical'}
      unit="deg"
      min={meta[name].min ?? -90}
      max={meta[name].max ?? 90}
      defaultSign={defaultSign}
      hint={
        axis === 'vertical' ? 'degrees on the vertical control' : 'position on the horizontal scale'
      }
      {...(axis === 'vertical' ? { signWords: UP_DOWN } : {})}
      value={fields[name] ?? null}
      onChange={(value) => void save({ [name]: value })}
    />
  );
  return (
    <StepFrame
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
      <EyeChoice
        label={meta.deviatingEye.label}
        value={fields.deviatingEye ?? null}
        onChange={(value) => void save({ deviatingEye: value })}
      />
      <div className="fl-bench-split">
        <div className="fl-bench-controls">
          {control('horizontalLostConvergentDeg', 'horizontal', 1)}
          {control('horizontalLostDivergentDeg', 'horizontal', -1)}
          {control('verticalLostUpperDeg', 'vertical', 1)}
          {control('verticalLostLowerDeg', 'vertical', -1)}
        </div>
        <div>
          <ScotomaMap region={region} />
          {problem ? (
            <p className="fl-field-error" role="alert">
              {problem}
            </p>
          ) : null}
        </div>
      </div>
      <BenchTextField
        label={meta.slideUsed.label}
        value={fields.slideUsed}
        onSave={(value) => void save({ slideUsed: value })}
      />
    </StepFrame>
  );
}
