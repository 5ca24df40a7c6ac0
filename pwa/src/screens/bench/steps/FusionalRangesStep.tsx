// Fusional ranges from the subjective angle: divergence first (convergence first can understate
// divergence), then convergence, vertical and cyclo; break and recovery at each. Amplitudes and
// the norms comparison are the shared clinical module's.
import {
  CLINICAL_CAUTION,
  FUSIONAL_NORMS_TABLE,
  fieldMeta,
  fusionalRangesOf,
  normsTableName,
} from '@fuselight/shared';
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
      >
        {proximal ? (
          <p className="fl-bench-warning" role="note" data-testid="proximal-convergence-note">
            {proximal.message} Findings on the amblyoscope are distance findings.
          </p>
        ) : null}
        {/* Takes the height left beside the readings; with many ranges it scrolls on its own. */}
        <div
          className="fl-bench-result fl-bench-ranges__result"
          aria-live="polite"
          data-testid="ranges-result"
          role="region"
          aria-label="Amplitudes and norms"
          tabIndex={0}
        >
          <h3>Amplitudes</h3>
          <p className="fl-muted">Compared with: {tableName}</p>
          {interpretation === null ? (
            <p className="fl-muted">No break recorded yet.</p>
          ) : interpretation.ok ? (
            <>
              {interpretation.value.startNote ? (
                <p className="fl-bench-warning">{interpretation.value.startNote}</p>
              ) : null}
              <ul>
                {interpretation.value.amplitudes.amplitudes.map((a) => (
                  <li key={a.direction}>{a.text}</li>
                ))}
              </ul>
              <h4>Against the norms</h4>
              <ul>
                {interpretation.value.norms.comparisons.map((c) => (
                  <li key={`${c.measurement.direction}-${c.measurement.point}`}>{c.message}</li>
                ))}
              </ul>
              {interpretation.value.norms.flags
                .filter((flag) => flag.kind !== 'proximal convergence')
                .map((flag) => (
                  <p
                    key={`${flag.kind}-${flag.direction}-${flag.point ?? ''}`}
                    className="fl-bench-warning"
                  >
                    {flag.message}
                  </p>
                ))}
              <Caution text={interpretation.value.norms.caution} />
            </>
          ) : (
            <>
              <p className="fl-field-error" role="alert">
                {interpretation.problem}
              </p>
              <Caution text={CLINICAL_CAUTION} />
            </>
          )}
        </div>
      </MeasureDeck>
    </StepFrame>
  );
}
