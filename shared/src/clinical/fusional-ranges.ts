// Fusional ranges on the amblyoscope (docs/clinical-reference.md, "The assessment"): ranges start
// at the subjective angle; the product stores break and recovery positions as read on the scales
// and derives amplitudes from them, then compares them with a replaceable, cited norms table.
import { CLINICAL_CAUTION } from './caution';
import { ClinicalInputError } from './clinical-input.error';
import {
  AMBLYOSCOPE_FUSIONAL_NORMS,
  type FusionalDirection,
  type FusionalNormRow,
  type FusionalNormsTable,
  type FusionalPoint,
  type FusionalUnit,
} from './fusional-norms';
import { degreesToPrismDioptres, prismDioptresToDegrees } from './prism-dioptre';
import { oneDecimal, requireAngleDeg, requireFinite, requireNonNegative } from './validate';

export interface RangeReading {
  /** Position on the scale where the picture broke. */
  break: number;
  /** Position where it recovered, if it did. */
  recovery?: number;
}

export interface FusionalRangeReadings {
  /** Horizontal subjective angle, degrees (+ convergent). */
  subjectiveAngleDeg: number;
  /** Vertical subjective angle, Δ on the vertical scale (+ right eye higher); default 0. */
  subjectiveVerticalPd?: number;
  /** Torsional subjective angle, degrees (+ excyclo); default 0. */
  subjectiveTorsionDeg?: number;
  /** Horizontal scale positions in degrees. */
  divergence?: RangeReading;
  convergence?: RangeReading;
  /** Vertical scale positions in Δ. */
  rightUp?: RangeReading;
  leftUp?: RangeReading;
  /** Torsion scale positions in degrees. */
  incyclo?: RangeReading;
  excyclo?: RangeReading;
  /** Set when convergence was measured before divergence, which can understate divergence. */
  convergenceMeasuredFirst?: boolean;
}

export interface FusionalMeasurement {
  direction: FusionalDirection;
  viewing: 'distance' | 'near';
  point: FusionalPoint;
  /** Amplitude (never negative) in `unit`. */
  value: number;
  unit: FusionalUnit;
}

export interface FusionalAmplitude {
  direction: FusionalDirection;
  unit: FusionalUnit;
  breakAmplitude: number;
  recoveryAmplitude?: number;
  /** The same amplitudes in the other unit by the exact definition Δ = 100·tan θ. */
  breakAmplitudeOtherUnit: number;
  text: string;
}

export interface FusionalAmplitudes {
  amplitudes: FusionalAmplitude[];
  /** Amplitudes plus derived totals (vertical, cyclo) ready for compareWithNorms. */
  measurements: FusionalMeasurement[];
  notes: string[];
}

interface DirectionSpec {
  key: 'divergence' | 'convergence' | 'rightUp' | 'leftUp' | 'incyclo' | 'excyclo';
  direction: FusionalDirection;
  unit: FusionalUnit;
  /** +1 when the range runs up the scale from the start, −1 when it runs down. */
  sense: 1 | -1;
  start: 'horizontal' | 'vertical' | 'torsion';
}

// Divergence first, as it is measured (convergence first can understate divergence).
const SPECS: readonly DirectionSpec[] = [
  { key: 'divergence', direction: 'divergence', unit: 'deg', sense: -1, start: 'horizontal' },
  { key: 'convergence', direction: 'convergence', unit: 'deg', sense: 1, start: 'horizontal' },
  { key: 'rightUp', direction: 'right up', unit: 'pd', sense: 1, start: 'vertical' },
  { key: 'leftUp', direction: 'left up', unit: 'pd', sense: -1, start: 'vertical' },
  { key: 'incyclo', direction: 'incyclo', unit: 'deg', sense: -1, start: 'torsion' },
  { key: 'excyclo', direction: 'excyclo', unit: 'deg', sense: 1, start: 'torsion' },
];

const UNIT_SIGN: Record<FusionalUnit, string> = { deg: '°', pd: 'Δ' };

function otherUnit(value: number, unit: FusionalUnit): number {
  return unit === 'deg' ? degreesToPrismDioptres(value) : prismDioptresToDegrees(value);
}

export function fusionalRangeAmplitudes(readings: FusionalRangeReadings): FusionalAmplitudes {
  const starts = {
    horizontal: requireAngleDeg('subjectiveAngleDeg', readings.subjectiveAngleDeg),
    vertical: requireFinite('subjectiveVerticalPd', readings.subjectiveVerticalPd ?? 0),
    torsion: requireAngleDeg('subjectiveTorsionDeg', readings.subjectiveTorsionDeg ?? 0),
  };
  const amplitudes: FusionalAmplitude[] = [];
  const measurements: FusionalMeasurement[] = [];
  const byKey = new Map<DirectionSpec['key'], FusionalAmplitude>();

  for (const spec of SPECS) {
    const reading = readings[spec.key];
    if (reading === undefined) continue;
    const check = spec.unit === 'deg' ? requireAngleDeg : requireFinite;
    const start = starts[spec.start];
    const breakAmplitude = spec.sense * (check(`${spec.key}.break`, reading.break) - start);
    if (breakAmplitude < 0) {
      throw new ClinicalInputError(
        `${spec.key}.break`,
        `lies on the wrong side of the starting angle ${start}${UNIT_SIGN[spec.unit]} for ${spec.direction} (got ${reading.break})`,
      );
    }
    const amplitude: FusionalAmplitude = {
      direction: spec.direction,
      unit: spec.unit,
      breakAmplitude,
      breakAmplitudeOtherUnit: otherUnit(breakAmplitude, spec.unit),
      text: `${spec.direction}: break ${oneDecimal(breakAmplitude)}${UNIT_SIGN[spec.unit]}`,
    };
    measurements.push({
      direction: spec.direction,
      viewing: 'distance',
      point: 'break',
      value: breakAmplitude,
      unit: spec.unit,
    });
    if (reading.recovery !== undefined) {
      const recoveryAmplitude =
        spec.sense * (check(`${spec.key}.recovery`, reading.recovery) - start);
      // Recovery is regained on the way back, so it lies between the start and the break.
      if (recoveryAmplitude < 0 || recoveryAmplitude > breakAmplitude) {
        throw new ClinicalInputError(
          `${spec.key}.recovery`,
          `must lie between the starting angle (${start}) and the break (${reading.break}) (got ${reading.recovery})`,
        );
      }
      amplitude.recoveryAmplitude = recoveryAmplitude;
      amplitude.text += `, recovery ${oneDecimal(recoveryAmplitude)}${UNIT_SIGN[spec.unit]}`;
      measurements.push({
        direction: spec.direction,
        viewing: 'distance',
        point: 'recovery',
        value: recoveryAmplitude,
        unit: spec.unit,
      });
    }
    amplitudes.push(amplitude);
    byKey.set(spec.key, amplitude);
  }

  const addTotal = (
    a: DirectionSpec['key'],
    b: DirectionSpec['key'],
    direction: FusionalDirection,
  ): void => {
    const first = byKey.get(a);
    const second = byKey.get(b);
    if (!first || !second) return;
    measurements.push({
      direction,
      viewing: 'distance',
      point: 'break',
      value: first.breakAmplitude + second.breakAmplitude,
      unit: first.unit,
    });
  };
  addTotal('rightUp', 'leftUp', 'vertical total');
  addTotal('incyclo', 'excyclo', 'cyclo total');

  const notes: string[] = [];
  if (readings.convergenceMeasuredFirst) {
    notes.push(
      'Convergence was measured before divergence; the divergence range may be understated.',
    );
  }
  return { amplitudes, measurements, notes };
}

export interface NormComparisonSettings {
  /** mean ± k·SD counts as within the norm; Fuselight default 1, a clinic setting. */
  sdMultiple?: number;
  /**
   * Largest break-to-recovery gap before it is flagged, in the measurement's unit. Fuselight
   * defaults (no published cut-off; clinic setting): horizontal 10, vertical 2, cyclo 10.
   */
  recoveryGapLimit?: { horizontal?: number; vertical?: number; cyclo?: number };
}

export type NormStanding = 'below' | 'within' | 'above' | 'reference only' | 'no norm';

export interface NormComparison {
  measurement: FusionalMeasurement;
  row: FusionalNormRow | null;
  /** The measurement in the row's unit (converted exactly when the units differ). */
  valueInRowUnit: number | null;
  standing: NormStanding;
  zScore?: number;
  message: string;
}

export type FusionalFlagKind = 'below norm' | 'recovery far from break' | 'proximal convergence';

export interface FusionalFlag {
  kind: FusionalFlagKind;
  direction: FusionalDirection;
  point?: FusionalPoint;
  message: string;
}

export interface NormComparisonReport {
  tableId: string;
  tableVersion: string;
  tableTitle: string;
  comparisons: NormComparison[];
  flags: FusionalFlag[];
  caution: string;
}

function groupOf(direction: FusionalDirection): 'horizontal' | 'vertical' | 'cyclo' {
  switch (direction) {
    case 'convergence':
    case 'divergence':
      return 'horizontal';
    case 'right up':
    case 'left up':
    case 'vertical total':
      return 'vertical';
    case 'incyclo':
    case 'excyclo':
    case 'cyclo total':
      return 'cyclo';
  }
}

/** A norms row's value in words, e.g. "4–6°" or "15 ± 4Δ" (as the comparison messages say it). */
export function describeNorm(row: FusionalNormRow): string {
  const u = UNIT_SIGN[row.unit];
  switch (row.norm.kind) {
    case 'mean-sd':
      return `${row.norm.mean} ± ${row.norm.sd}${u}`;
    case 'range':
      return `${row.norm.low}–${row.norm.high}${u}`;
    case 'median':
      return `median ${row.norm.median}${u}`;
  }
}

function compareOne(
  measurement: FusionalMeasurement,
  table: FusionalNormsTable,
  sdMultiple: number,
): NormComparison {
  const row =
    table.rows.find(
      (r) =>
        r.direction === measurement.direction &&
        r.point === measurement.point &&
        (r.viewing === 'any' || r.viewing === measurement.viewing),
    ) ?? null;
  const label = `${measurement.direction} ${measurement.point} (${measurement.viewing})`;
  if (!row) {
    return {
      measurement,
      row,
      valueInRowUnit: null,
      standing: 'no norm',
      message: `${label}: no row in ${table.title}.`,
    };
  }
  const value =
    row.unit === measurement.unit
      ? measurement.value
      : otherUnit(measurement.value, measurement.unit);
  const u = UNIT_SIGN[row.unit];
  const shown = `${oneDecimal(value)}${u}${row.unit === measurement.unit ? '' : ' (converted exactly)'}`;
  // The citation itself says [memory] or teaching source, so the screen shows how firm it is.
  const against = `norm ${describeNorm(row)} (${row.citation})`;

  let standing: NormStanding;
  let zScore: number | undefined;
  switch (row.norm.kind) {
    case 'mean-sd': {
      zScore = (value - row.norm.mean) / row.norm.sd;
      standing = zScore < -sdMultiple ? 'below' : zScore > sdMultiple ? 'above' : 'within';
      break;
    }
    case 'range':
      standing = value < row.norm.low ? 'below' : value > row.norm.high ? 'above' : 'within';
      break;
    case 'median':
      standing = 'reference only';
      break;
  }
  const comparison: NormComparison = {
    measurement,
    row,
    valueInRowUnit: value,
    standing,
    message: `${label} ${shown}: ${standing === 'reference only' ? 'compare with' : `${standing} the`} ${against}.`,
  };
  if (zScore !== undefined) comparison.zScore = zScore;
  return comparison;
}

/** Compares amplitudes with a norms table (the amblyoscope defaults unless a clinic sets one). */
export function compareWithNorms(
  measurements: readonly FusionalMeasurement[],
  table: FusionalNormsTable = AMBLYOSCOPE_FUSIONAL_NORMS,
  { sdMultiple = 1, recoveryGapLimit = {} }: NormComparisonSettings = {},
): NormComparisonReport {
  requireNonNegative('sdMultiple', sdMultiple);
  const gapLimits = { horizontal: 10, vertical: 2, cyclo: 10, ...recoveryGapLimit };
  Object.entries(gapLimits).forEach(([k, v]) => requireNonNegative(`recoveryGapLimit.${k}`, v));
  measurements.forEach((m, i) => requireNonNegative(`measurements[${i}].value`, m.value));

  const comparisons = measurements.map((m) => compareOne(m, table, sdMultiple));
  const flags: FusionalFlag[] = [];

  for (const c of comparisons) {
    const { direction, point } = c.measurement;
    if (c.standing === 'below') {
      flags.push({
        kind: 'below norm',
        direction,
        point,
        message: `${capitalise(point)} below the norm: ${c.message}`,
      });
    }
    // Proximal convergence on the amblyoscope often inflates convergence (common practice).
    if (
      table.instrument === 'amblyoscope' &&
      direction === 'convergence' &&
      point === 'break' &&
      c.standing === 'above'
    ) {
      flags.push({
        kind: 'proximal convergence',
        direction,
        point,
        message:
          'High convergence on the amblyoscope: proximal convergence often inflates convergence ranges.',
      });
    }
  }

  for (const m of measurements) {
    if (m.point !== 'break') continue;
    const recovery = measurements.find(
      (r) => r.point === 'recovery' && r.direction === m.direction && r.viewing === m.viewing,
    );
    if (!recovery || recovery.unit !== m.unit) continue;
    const gap = m.value - recovery.value;
    const limit = gapLimits[groupOf(m.direction)];
    if (gap > limit) {
      const u = UNIT_SIGN[m.unit];
      flags.push({
        kind: 'recovery far from break',
        direction: m.direction,
        message: `${capitalise(m.direction)}: recovery ${oneDecimal(recovery.value)}${u} is ${oneDecimal(gap)}${u} from the break ${oneDecimal(m.value)}${u} (clinic limit ${limit}${u}).`,
      });
    }
  }

  return {
    tableId: table.id,
    tableVersion: table.version,
    tableTitle: table.title,
    comparisons,
    flags,
    caution: CLINICAL_CAUTION,
  };
}

function capitalise(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}
