// The subjective angle (where the patient puts the figure in the enclosure) and the objective
// angle (the cover test on the instrument), with the correspondence result live once both
// horizontal angles are in.
import {
  CLINICAL_CAUTION,
  correspondenceOf,
  describeDeviation,
  fieldMeta,
} from '@fuselight/shared';
import type { ReactNode } from 'react';
import { type BenchFields, useBenchSection } from '../../../data/bench';
import { type DeckCell, MeasureDeck } from '../MeasureDeck';
import { Caution, StepFrame } from '../StepFrame';

const meta = fieldMeta.amblyoscopeAngles;
type Angles = BenchFields<'amblyoscopeAngles'>;
type Kind = 'subjective' | 'objective';

const SHARED_SKIP_NOTE =
  'The subjective and objective angles are one Section: skipping records both as not done. Why were they not done?';

function summaryOf(angles: Angles, kind: Kind): string {
  const h = angles[`${kind}HorizontalDeg`];
  const v = angles[`${kind}VerticalPd`];
  const t = angles[`${kind}TorsionDeg`];
  if (h == null && v == null && t == null) return 'Nothing recorded yet.';
  return describeDeviation({
    ...(h == null ? {} : { horizontalDeg: h }),
    ...(v == null ? {} : { verticalPd: v }),
    ...(t == null ? {} : { torsionDeg: t }),
  }).summary;
}

function AngleTriplet({
  kind,
  angles,
  save,
  children,
}: {
  kind: Kind;
  angles: Angles;
  save: (changes: Partial<Angles>) => Promise<boolean>;
  children?: ReactNode;
}) {
  const h = `${kind}HorizontalDeg` as const;
  const v = `${kind}VerticalPd` as const;
  const t = `${kind}TorsionDeg` as const;
  const cells: DeckCell[] = [
    { field: h, axis: 'horizontal', unit: 'deg', min: meta[h].min ?? -90, max: meta[h].max ?? 90 },
    { field: v, axis: 'vertical', unit: 'pd', min: meta[v].min ?? -50, max: meta[v].max ?? 50 },
    { field: t, axis: 'torsion', unit: 'deg', min: meta[t].min ?? -45, max: meta[t].max ?? 45 },
  ].map((cell) => ({
    ...cell,
    axis: cell.axis as DeckCell['axis'],
    unit: cell.unit as DeckCell['unit'],
    label: meta[cell.field].label,
    value: angles[cell.field] ?? null,
  }));
  return (
    <MeasureDeck
      title={`${kind === 'subjective' ? 'Subjective' : 'Objective'} angle readings`}
      cells={cells}
      onChange={(field, value) => void save({ [field]: value })}
    >
      {children}
    </MeasureDeck>
  );
}

export function SubjectiveAngleStep({ visitId }: { visitId: string }) {
  const section = useBenchSection(visitId, 'amblyoscopeAngles');
  return (
    <StepFrame
      title="Subjective angle"
      section={section}
      skipNote={SHARED_SKIP_NOTE}
      instructions={
        <p>
          With the simultaneous perception slides in, the patient moves one tube until the figure
          sits inside the enclosure. Read the scales: horizontal, vertical and torsion.
        </p>
      }
    >
      <AngleTriplet kind="subjective" angles={section.fields} save={section.save}>
        <p className="fl-bench-live" aria-live="polite">
          <strong>Subjective angle:</strong> {summaryOf(section.fields, 'subjective')}
        </p>
      </AngleTriplet>
    </StepFrame>
  );
}

export function CorrespondenceResult({ angles }: { angles: Angles }) {
  const result = correspondenceOf(angles);
  return (
    <div className="fl-bench-result" aria-live="polite" data-testid="correspondence-result">
      <h3>Retinal correspondence</h3>
      {result === null ? (
        <p className="fl-muted">
          Record both the subjective and the objective horizontal angle to see the correspondence.
        </p>
      ) : result.ok ? (
        <>
          <p className="fl-bench-result__headline">
            {result.value.needsRemeasurement ? 'Re-measure: ' : ''}
            {result.value.result} · angle of anomaly{' '}
            {(Math.round(result.value.angleOfAnomalyDeg * 10) / 10).toFixed(1)}°
          </p>
          <p>{result.value.message}</p>
          <p className="fl-muted">
            Tolerance {result.value.toleranceDeg}° (clinic setting). Angle of anomaly = objective −
            subjective.
          </p>
          <Caution text={result.value.caution} />
        </>
      ) : (
        <>
          <p className="fl-field-error">{result.problem}</p>
          <Caution text={CLINICAL_CAUTION} />
        </>
      )}
    </div>
  );
}

export function ObjectiveAngleStep({ visitId }: { visitId: string }) {
  const section = useBenchSection(visitId, 'amblyoscopeAngles');
  return (
    <StepFrame
      title="Objective angle"
      section={section}
      skipNote={SHARED_SKIP_NOTE}
      instructions={
        <p>
          Light the slides alternately and move the tube until the eyes no longer move to take up
          fixation. This marks where the fovea points.
        </p>
      }
    >
      <AngleTriplet kind="objective" angles={section.fields} save={section.save}>
        <p className="fl-bench-live" aria-live="polite">
          <strong>Objective angle:</strong> {summaryOf(section.fields, 'objective')}
        </p>
      </AngleTriplet>
      <CorrespondenceResult angles={section.fields} />
    </StepFrame>
  );
}
