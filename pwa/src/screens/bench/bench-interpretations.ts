// What the Bench says about the findings, always through the shared clinical functions. A
// computation that refuses its input returns the refusal in words instead of a number.
import {
  AMBLYOSCOPE_FUSIONAL_NORMS,
  type BsvGradeEntry,
  type BsvInconsistency,
  ClinicalInputError,
  type CorrespondenceClassification,
  type FusionalAmplitudes,
  type NormComparisonReport,
  type StereoVerdict,
  checkBsvGrades,
  classifyCorrespondence,
  compareWithNorms,
  fusionalRangeAmplitudes,
  stereoVerdict,
} from '@fuselight/shared';
import type { BenchFields } from '../../data/bench';

export type Interpretation<T> = { ok: true; value: T } | { ok: false; problem: string };

function attempt<T>(compute: () => T): Interpretation<T> {
  try {
    return { ok: true, value: compute() };
  } catch (error) {
    if (error instanceof ClinicalInputError) return { ok: false, problem: error.message };
    throw error;
  }
}

type Angles = BenchFields<'amblyoscopeAngles'>;

/** Null until both horizontal angles are recorded. */
export function correspondenceOf(
  angles: Angles,
  toleranceDeg?: number,
): Interpretation<CorrespondenceClassification> | null {
  const { objectiveHorizontalDeg: objectiveDeg, subjectiveHorizontalDeg: subjectiveDeg } = angles;
  if (objectiveDeg == null || subjectiveDeg == null) return null;
  return attempt(() =>
    classifyCorrespondence({
      objectiveDeg,
      subjectiveDeg,
      ...(toleranceDeg === undefined ? {} : { toleranceDeg }),
    }),
  );
}

export interface RangesInterpretation {
  amplitudes: FusionalAmplitudes;
  norms: NormComparisonReport;
  /** Set when no subjective angle is recorded and the ranges were read from zero. */
  startNote: string | null;
}

type Ranges = BenchFields<'fusionalRanges'>;

function reading(breakAt: number | null | undefined, recovery: number | null | undefined) {
  if (breakAt == null) return undefined;
  return recovery == null ? { break: breakAt } : { break: breakAt, recovery };
}

/** Amplitudes from the recorded positions, measured from the subjective angle. */
export function rangesOf(
  angles: Angles,
  ranges: Ranges,
): Interpretation<RangesInterpretation> | null {
  const readings = {
    divergence: reading(ranges.divergenceBreakDeg, ranges.divergenceRecoveryDeg),
    convergence: reading(ranges.convergenceBreakDeg, ranges.convergenceRecoveryDeg),
    rightUp: reading(ranges.rightUpBreakPd, ranges.rightUpRecoveryPd),
    leftUp: reading(ranges.leftUpBreakPd, ranges.leftUpRecoveryPd),
    incyclo: reading(ranges.incycloBreakDeg, ranges.incycloRecoveryDeg),
    excyclo: reading(ranges.excycloBreakDeg, ranges.excycloRecoveryDeg),
  };
  if (Object.values(readings).every((r) => r === undefined)) return null;
  const start = angles.subjectiveHorizontalDeg;
  return attempt(() => {
    const amplitudes = fusionalRangeAmplitudes({
      subjectiveAngleDeg: start ?? 0,
      subjectiveVerticalPd: angles.subjectiveVerticalPd ?? 0,
      subjectiveTorsionDeg: angles.subjectiveTorsionDeg ?? 0,
      ...Object.fromEntries(Object.entries(readings).filter(([, r]) => r !== undefined)),
    });
    return {
      amplitudes,
      norms: compareWithNorms(amplitudes.measurements, AMBLYOSCOPE_FUSIONAL_NORMS),
      startNote:
        start == null
          ? 'No subjective angle is recorded, so these amplitudes are read from 0°. Record the subjective angle for ranges measured from it.'
          : null,
    };
  });
}

export const BENCH_NORMS_TABLE = AMBLYOSCOPE_FUSIONAL_NORMS;
export const normsTableName = (table = AMBLYOSCOPE_FUSIONAL_NORMS) =>
  `${table.title}, version ${table.version}`;

export type StereoTrials = NonNullable<BenchFields<'grossStereopsis'>['trials']>;

export function stereoOf(trials: StereoTrials | null | undefined): StereoVerdict {
  return stereoVerdict(trials ?? []);
}

function gradeEntry(
  result: 'present' | 'absent' | 'notTested' | null | undefined,
  skipped: boolean,
  suppressingEye?: 'right' | 'left' | 'alternating' | null,
): BsvGradeEntry {
  if (skipped || result == null || result === 'notTested') return 'not tested';
  if (result === 'absent') {
    return suppressingEye ? { status: 'absent', suppressingEye } : 'absent';
  }
  return 'present';
}

/** Inconsistencies in the BSV hierarchy as entered so far (an empty list when consistent). */
export function bsvInconsistencies(input: {
  simultaneousPerception: BenchFields<'simultaneousPerception'>;
  fusion: BenchFields<'fusion'>;
  grossStereopsis: BenchFields<'grossStereopsis'>;
}): BsvInconsistency[] {
  const sp = input.simultaneousPerception;
  const fusion = input.fusion;
  const stereo = input.grossStereopsis;
  const stereoSkipped = Boolean(stereo.skippedReason);
  // Gross stereopsis is presence only: shown counts as present; an undecided run is not a grade.
  const stereoStatus: BsvGradeEntry =
    !stereoSkipped &&
    stereo.trials &&
    stereo.trials.length > 0 &&
    stereoOf(stereo.trials).verdict === 'present'
      ? 'present'
      : 'not tested';
  return checkBsvGrades({
    simultaneousPerception: gradeEntry(sp.result, Boolean(sp.skippedReason), sp.suppressingEye),
    fusion: gradeEntry(fusion.result, Boolean(fusion.skippedReason)),
    stereopsis: stereoStatus,
  });
}
