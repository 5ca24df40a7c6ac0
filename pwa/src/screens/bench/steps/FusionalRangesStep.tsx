// Fusional ranges from the subjective angle: divergence first (convergence first can understate
// divergence), then convergence, vertical and cyclo; break and recovery at each. Amplitudes and
// the norms comparison are the shared clinical module's.
import {
  CLINICAL_CAUTION,
  FUSIONAL_NORMS_TABLE,
  type FusionalDirection,
  type NormComparison,
  describeNorm,
  fieldMeta,
  fusionalRangesOf,
  normsTableName,
} from '@fuselight/shared';
import type { ReactNode } from 'react';
import { type BenchFields, benchFields, useBenchSection } from '../../../data/bench';
import { type DeckCell, MeasureDeck } from '../MeasureDeck';
import { Caution, StepFrame } from '../StepFrame';

const meta = fieldMeta.fusionalRanges;
type Ranges = BenchFields<'fusionalRanges'>;
type RangeField = Exclude<keyof Ranges, 'skippedReason' | 'normsTable' | 'slideUsed'>;

interface Pair {
  title: string;
  breakField: RangeField;
  recoveryField: RangeField;
  axis: 'horizontal' | 'vertical' | 'torsion';
  unit: 'deg' | 'pd';
  defaultSign: 1 | -1;
}

const GROUPS: readonly Pair[] = [
  {
    title: 'Divergence (measure first)',
    breakField: 'divergenceBreakDeg',
    recoveryField: 'divergenceRecoveryDeg',
    axis: 'horizontal',
    unit: 'deg',
    defaultSign: -1,
  },
  {
    title: 'Convergence',
    breakField: 'convergenceBreakDeg',
    recoveryField: 'convergenceRecoveryDeg',
    axis: 'horizontal',
    unit: 'deg',
    defaultSign: 1,
  },
  {
    title: 'Vertical, right eye up',
    breakField: 'rightUpBreakPd',
    recoveryField: 'rightUpRecoveryPd',
    axis: 'vertical',
    unit: 'pd',
    defaultSign: 1,
  },
  {
    title: 'Vertical, left eye up',
    breakField: 'leftUpBreakPd',
    recoveryField: 'leftUpRecoveryPd',
    axis: 'vertical',
    unit: 'pd',
    defaultSign: -1,
  },
  {
    title: 'Cyclofusion, incyclo',
    breakField: 'incycloBreakDeg',
    recoveryField: 'incycloRecoveryDeg',
    axis: 'torsion',
    unit: 'deg',
    defaultSign: -1,
  },
  {
    title: 'Cyclofusion, excyclo',
    breakField: 'excycloBreakDeg',
    recoveryField: 'excycloRecoveryDeg',
    axis: 'torsion',
    unit: 'deg',
    defaultSign: 1,
  },
];

export function FusionalRangesStep({ visitId }: { visitId: string }) {
  const section = useBenchSection(visitId, 'fusionalRanges');
  const { fields, save } = section;
  const angles = benchFields(section.bundle, 'amblyoscopeAngles');
  const interpretation = fusionalRangesOf(angles, fields);
  const tableName = normsTableName(FUSIONAL_NORMS_TABLE);
  const saveReading = (name: RangeField, value: number | null) =>
    void save({
      [name]: value,
      normsTable: `${FUSIONAL_NORMS_TABLE.id}@${FUSIONAL_NORMS_TABLE.version}`,
    });
  const proximal =
    interpretation?.ok === true
      ? interpretation.value.norms.flags.find((flag) => flag.kind === 'proximal convergence')
      : undefined;

  const cells: DeckCell[] = GROUPS.flatMap((group) =>
    ([group.breakField, group.recoveryField] as const).map((name): DeckCell => ({
      field: name,
      label: meta[name].label,
      short: name === group.breakField ? 'Break' : 'Recovery',
      group: group.title,
      axis: group.axis,
      unit: group.unit,
      min: meta[name].min ?? -90,
      max: meta[name].max ?? 90,
      defaultSign: group.defaultSign,
      value: (fields[name] as number | null | undefined) ?? null,
      // Horizontal ranges are measured out from the subjective angle.
      start: group.axis === 'horizontal' ? (angles.subjectiveHorizontalDeg ?? null) : null,
      mark: name === group.breakField ? 'markBreak' : 'markRecovery',
    })),
  );

  return (
    <StepFrame
      className="fl-bench-ranges"
      title="Fusional ranges"
      section={section}
      instructions={
        <p>
          Start at the subjective angle
          {angles.subjectiveHorizontalDeg == null
            ? ' (not recorded yet)'
            : ` (${angles.subjectiveHorizontalDeg}°)`}
          . Measure divergence first, then convergence; at each, where the picture breaks and where
          it recovers. Vertical and cyclo ranges may follow. Record the positions read on the
          scales; the amplitudes are worked out from them.
        </p>
      }
    >
      <MeasureDeck
        title="Fusional range readings"
        cells={cells}
        onChange={(field, value) => saveReading(field as RangeField, value)}
        aside={<RangesResult interpretation={interpretation} tableName={tableName} />}
      >
        {/* Notes on the result sit under the stepper, where the screen has room for them. */}
        {proximal ? (
          <p className="fl-bench-warning" role="note" data-testid="proximal-convergence-note">
            {proximal.message} Findings on the amblyoscope are distance findings.
          </p>
        ) : null}
        {interpretation?.ok && interpretation.value.startNote ? (
          <p className="fl-bench-warning">{interpretation.value.startNote}</p>
        ) : null}
        {interpretation?.ok
          ? interpretation.value.norms.flags
              .filter((flag) => flag.kind === 'recovery far from break')
              .map((flag) => (
                <p key={`${flag.kind}-${flag.direction}`} className="fl-bench-warning">
                  {flag.message}
                </p>
              ))
          : null}
      </MeasureDeck>
    </StepFrame>
  );
}

const UNIT_SIGN = { deg: '°', pd: 'Δ' } as const;
const decimal = (value: number) => (Math.round(value * 10) / 10).toFixed(1);

/** One amplitude and where it stands, e.g. "5.0° · within 4–6° (memory)". */
function standingOf(c: NormComparison): string {
  const amplitude = `${decimal(c.measurement.value)}${UNIT_SIGN[c.measurement.unit]}`;
  if (!c.row) return `${amplitude} · no norm`;
  const converted =
    c.row.unit === c.measurement.unit || c.valueInRowUnit === null
      ? ''
      : ` (${decimal(c.valueInRowUnit)}${UNIT_SIGN[c.row.unit]})`;
  const evidence = c.row.evidence === 'published' ? '' : ` (${c.row.evidence})`;
  const standing = c.standing === 'reference only' ? 'compare' : c.standing;
  return `${amplitude}${converted} · ${standing} ${describeNorm(c.row)}${evidence}`;
}

/**
 * The amplitudes against the norms as one small table (a row a direction, break and recovery
 * side by side), the norms' sources once, and the clinical caution: all of it on screen at
 * once beside the readings, whatever ranges are recorded.
 */
function RangesResult({
  interpretation,
  tableName,
}: {
  interpretation: ReturnType<typeof fusionalRangesOf>;
  tableName: string;
}) {
  let body: ReactNode;
  if (interpretation === null) {
    body = <p className="fl-muted">No break recorded yet.</p>;
  } else if (!interpretation.ok) {
    body = (
      <>
        <p className="fl-field-error" role="alert">
          {interpretation.problem}
        </p>
        <Caution text={CLINICAL_CAUTION} />
      </>
    );
  } else {
    const { norms } = interpretation.value;
    const directions = [...new Set(norms.comparisons.map((c) => c.measurement.direction))];
    const at = (direction: FusionalDirection, point: 'break' | 'recovery') =>
      norms.comparisons.find(
        (c) => c.measurement.direction === direction && c.measurement.point === point,
      );
    // A total (vertical, cyclo) has a break only; any other direction may lack its recovery.
    const cell = (c: NormComparison | undefined, total: boolean) =>
      c ? (
        <td className={c.standing === 'below' ? 'fl-bench-ranges__below' : undefined}>
          {standingOf(c)}
        </td>
      ) : (
        <td className="fl-muted">{total ? '—' : 'not recorded'}</td>
      );
    const sources = [...new Set(norms.comparisons.flatMap((c) => (c.row ? [c.row.citation] : [])))];
    body = (
      <>
        <table className="fl-bench-ranges__table">
          <thead>
            <tr>
              <th scope="col">Range (distance)</th>
              <th scope="col">Break</th>
              <th scope="col">Recovery</th>
            </tr>
          </thead>
          <tbody>
            {directions.map((direction) => (
              <tr key={direction}>
                <th scope="row">{direction}</th>
                {cell(at(direction, 'break'), direction.endsWith('total'))}
                {cell(at(direction, 'recovery'), direction.endsWith('total'))}
              </tr>
            ))}
          </tbody>
        </table>
        {sources.length > 0 ? (
          <p className="fl-muted fl-bench-ranges__sources">Norms: {sources.join('; ')}.</p>
        ) : null}
        <Caution text={norms.caution} />
      </>
    );
  }
  return (
    <div
      className="fl-bench-result fl-bench-ranges__result"
      aria-live="polite"
      data-testid="ranges-result"
      role="region"
      aria-label="Amplitudes and norms"
    >
      <h3>Amplitudes</h3>
      <p className="fl-muted">Compared with: {tableName}</p>
      {body}
    </div>
  );
}
