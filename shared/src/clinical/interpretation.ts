// Interpretation of recorded Sections: the one place that reads Section fields and hands them to
// the computations in this folder, for the Visit screen (and the Review desk's countersign view),
// the Bench's live steps and the letters. Names, one meaning each:
//   ComputedResult<T>  one computation's value, or the refusal of its input in words;
//   Interpretation     one worded interpretation (title, lines, basis, tone, letter summary);
//   VisitInterpretations  every interpretation a visit's Sections allow, with CLINICAL_CAUTION,
// which every screen and letter that shows an interpretation shows beside it.
import { accommodationAmplitude } from './accommodation';
import {
  checkBsvGrades,
  type BsvGradeEntry,
  type BsvGradeStatus,
  type BsvInconsistency,
} from './bsv-grades';
import { CLINICAL_CAUTION } from './caution';
import { ClinicalInputError } from './clinical-input.error';
import { classifyCorrespondence, type CorrespondenceClassification } from './correspondence';
import { describeDeviation } from './deviation';
import { AMBLYOSCOPE_FUSIONAL_NORMS } from './fusional-norms';
import {
  compareWithNorms,
  fusionalRangeAmplitudes,
  type FusionalAmplitudes,
  type FusionalRangeReadings,
  type NormComparisonReport,
  type RangeReading,
} from './fusional-ranges';
import { judgeNearPointOfConvergence, type NpcJudgement } from './near-point-of-convergence';
import { stereoVerdict, type StereoTrial, type StereoVerdict } from './stereo-trials';
import { nearestSnellenLine } from './visual-acuity';
import type { SectionCollectionName } from '../schemas/collection-names.schema';

/** A Section's stored fields (any may be missing), or nothing when it was not charted. */
export type SectionFieldValues = object | null | undefined;

/** A visit's Sections as stored: collection → field values. */
export type VisitSectionValues = Partial<Record<SectionCollectionName, SectionFieldValues>>;

/** One computation's value, or why its input was refused (the ClinicalInputError's words). */
export type ComputedResult<T> = { ok: true; value: T } | { ok: false; problem: string };

export function computeOrRefuse<T>(compute: () => T): ComputedResult<T> {
  try {
    return { ok: true, value: compute() };
  } catch (error) {
    if (error instanceof ClinicalInputError) return { ok: false, problem: error.message };
    throw error;
  }
}

function read(section: SectionFieldValues, field: string): unknown {
  return section ? (section as Record<string, unknown>)[field] : undefined;
}

function num(section: SectionFieldValues, field: string): number | undefined {
  const value = read(section, field);
  return typeof value === 'number' && Number.isFinite(value) ? value : undefined;
}

/** Whole years between a date of birth and a visit date (both YYYY-MM-DD), or undefined. */
export function ageOnDate(dateOfBirth: unknown, onDate: string): number | undefined {
  if (typeof dateOfBirth !== 'string') return undefined;
  const [by, bm, bd] = dateOfBirth.split('-').map(Number);
  const [vy, vm, vd] = onDate.split('-').map(Number);
  if ([by, bm, bd, vy, vm, vd].some((n) => n === undefined || !Number.isFinite(n))) {
    return undefined;
  }
  let age = vy! - by!;
  if (vm! < bm! || (vm === bm && vd! < bd!)) age -= 1;
  return age >= 0 ? age : undefined;
}

// ---- Section fields → one computation ----------------------------------------------------------

/** Retinal correspondence from the angles Section; null until both horizontal angles are in. */
export function correspondenceOf(
  angles: SectionFieldValues,
  toleranceDeg?: number,
): ComputedResult<CorrespondenceClassification> | null {
  const objectiveDeg = num(angles, 'objectiveHorizontalDeg');
  const subjectiveDeg = num(angles, 'subjectiveHorizontalDeg');
  if (objectiveDeg === undefined || subjectiveDeg === undefined) return null;
  return computeOrRefuse(() =>
    classifyCorrespondence({
      objectiveDeg,
      subjectiveDeg,
      ...(toleranceDeg === undefined ? {} : { toleranceDeg }),
    }),
  );
}

const RANGE_KEYS: readonly {
  key: keyof Pick<
    FusionalRangeReadings,
    'divergence' | 'convergence' | 'rightUp' | 'leftUp' | 'incyclo' | 'excyclo'
  >;
  breakField: string;
  recoveryField: string;
}[] = [
  { key: 'divergence', breakField: 'divergenceBreakDeg', recoveryField: 'divergenceRecoveryDeg' },
  {
    key: 'convergence',
    breakField: 'convergenceBreakDeg',
    recoveryField: 'convergenceRecoveryDeg',
  },
  { key: 'rightUp', breakField: 'rightUpBreakPd', recoveryField: 'rightUpRecoveryPd' },
  { key: 'leftUp', breakField: 'leftUpBreakPd', recoveryField: 'leftUpRecoveryPd' },
  { key: 'incyclo', breakField: 'incycloBreakDeg', recoveryField: 'incycloRecoveryDeg' },
  { key: 'excyclo', breakField: 'excycloBreakDeg', recoveryField: 'excycloRecoveryDeg' },
];

/** The readings for fusionalRangeAmplitudes, or null when no break was recorded. */
export function rangeReadings(
  ranges: SectionFieldValues,
  angles: SectionFieldValues,
): { readings: Omit<FusionalRangeReadings, 'subjectiveAngleDeg'>; subjective?: number } | null {
  const readings: Omit<FusionalRangeReadings, 'subjectiveAngleDeg'> = {};
  let any = false;
  for (const spec of RANGE_KEYS) {
    const breakAt = num(ranges, spec.breakField);
    if (breakAt === undefined) continue;
    const recovery = num(ranges, spec.recoveryField);
    const reading: RangeReading =
      recovery === undefined ? { break: breakAt } : { break: breakAt, recovery };
    readings[spec.key] = reading;
    any = true;
  }
  if (!any) return null;
  const vertical = num(angles, 'subjectiveVerticalPd');
  const torsion = num(angles, 'subjectiveTorsionDeg');
  if (vertical !== undefined) readings.subjectiveVerticalPd = vertical;
  if (torsion !== undefined) readings.subjectiveTorsionDeg = torsion;
  const subjective = num(angles, 'subjectiveHorizontalDeg');
  return subjective === undefined ? { readings } : { readings, subjective };
}

/** Fusional amplitudes from the recorded positions and how they stand against the norms. */
export interface FusionalRangesFinding {
  amplitudes: FusionalAmplitudes;
  norms: NormComparisonReport;
  /** Set when no subjective angle is recorded and the ranges were read from zero. */
  startNote: string | null;
}

/**
 * Amplitudes measured from the subjective angle, compared with the norms; null until a break is
 * recorded. Without a subjective angle they are read from 0° and `startNote` says so.
 */
export function fusionalRangesOf(
  angles: SectionFieldValues,
  ranges: SectionFieldValues,
): ComputedResult<FusionalRangesFinding> | null {
  const picked = rangeReadings(ranges, angles);
  if (!picked) return null;
  return computeOrRefuse(() => {
    const amplitudes = fusionalRangeAmplitudes({
      ...picked.readings,
      subjectiveAngleDeg: picked.subjective ?? 0,
    });
    return {
      amplitudes,
      norms: compareWithNorms(amplitudes.measurements, AMBLYOSCOPE_FUSIONAL_NORMS),
      startNote:
        picked.subjective === undefined
          ? 'No subjective angle is recorded, so these amplitudes are read from 0°. Record the subjective angle for ranges measured from it.'
          : null,
    };
  });
}

export const FUSIONAL_NORMS_TABLE = AMBLYOSCOPE_FUSIONAL_NORMS;
export const normsTableName = (table = AMBLYOSCOPE_FUSIONAL_NORMS) =>
  `${table.title}, version ${table.version}`;

/** The verdict of a gross stereopsis run (no trials: undecided). */
export function stereoOf(trials: readonly StereoTrial[] | null | undefined): StereoVerdict {
  return stereoVerdict(trials ?? []);
}

/** The BSV grades as recorded, and whether they agree with each other. */
export interface BsvGradesFinding {
  simultaneousPerception: BsvGradeStatus;
  fusion: BsvGradeStatus;
  stereopsis: BsvGradeStatus;
  /** What a gross stereopsis run said, when it decided the stereopsis grade or could not. */
  stereoNote: string | null;
  /** Inconsistencies in the hierarchy (empty when consistent). */
  problems: BsvInconsistency[];
}

function gradeEntry(section: SectionFieldValues, withEye: boolean): BsvGradeEntry {
  if (read(section, 'skippedReason')) return 'not tested';
  const result = read(section, 'result');
  if (result === 'present') return 'present';
  if (result !== 'absent') return 'not tested';
  const eye = read(section, 'suppressingEye');
  return withEye && (eye === 'right' || eye === 'left' || eye === 'alternating')
    ? { status: 'absent', suppressingEye: eye }
    : 'absent';
}

const statusOf = (entry: BsvGradeEntry): BsvGradeStatus =>
  typeof entry === 'string' ? entry : entry.status;

/**
 * The three BSV grades from their Sections: stereopsis from the stereoacuity Section when a value
 * or "none detected" is recorded, else from a gross stereopsis run (present only when its
 * verdict is; presence only, so an undecided run is not a grade).
 */
export function bsvGradesOf(sections: {
  simultaneousPerception?: SectionFieldValues;
  fusion?: SectionFieldValues;
  grossStereopsis?: SectionFieldValues;
  stereoacuity?: SectionFieldValues;
}): BsvGradesFinding {
  const sp = gradeEntry(sections.simultaneousPerception, true);
  const fusion = gradeEntry(sections.fusion, false);
  let stereopsis: BsvGradeStatus = 'not tested';
  let stereoNote: string | null = null;
  const trials = read(sections.grossStereopsis, 'trials');
  if (num(sections.stereoacuity, 'valueArcsec') !== undefined) stereopsis = 'present';
  else if (read(sections.stereoacuity, 'noneDetected') === true) stereopsis = 'absent';
  else if (
    !read(sections.grossStereopsis, 'skippedReason') &&
    Array.isArray(trials) &&
    trials.length > 0
  ) {
    const verdict = computeOrRefuse(() => stereoOf(trials as StereoTrial[]));
    if (verdict.ok) {
      stereopsis = verdict.value.verdict === 'present' ? 'present' : 'not tested';
      stereoNote = verdict.value.message;
    } else {
      stereoNote = `Gross stereopsis not interpreted: ${verdict.problem}`;
    }
  }
  return {
    simultaneousPerception: statusOf(sp),
    fusion: statusOf(fusion),
    stereopsis,
    stereoNote,
    problems: checkBsvGrades({ simultaneousPerception: sp, fusion, stereopsis }),
  };
}

/** The near point of convergence against the norm for age; null until a break is recorded. */
export function nearPointOf(
  npc: SectionFieldValues,
  ageYears: number,
): ComputedResult<NpcJudgement> | null {
  const breakCm = num(npc, 'breakCm');
  if (breakCm === undefined) return null;
  const recoveryCm = num(npc, 'recoveryCm');
  return computeOrRefuse(() =>
    judgeNearPointOfConvergence({
      breakCm,
      ageYears,
      ...(recoveryCm === undefined ? {} : { recoveryCm }),
    }),
  );
}

// ---- Worded interpretations --------------------------------------------------------------------

export interface Interpretation {
  key: 'correspondence' | 'bsv' | 'ranges' | 'npc' | 'accommodation' | 'acuity';
  title: string;
  /** The interpretation in words, or why it could not be made. */
  lines: string[];
  /** Which norms table, formula or cut-off the comparison used. */
  basis?: string;
  tone: 'neutral' | 'attention';
  /** One sentence for a letter, or null when nothing could be interpreted. */
  summary: string | null;
}

/** An item that says why nothing could be interpreted (no sentence for a letter). */
function withoutSummary(
  base: Pick<Interpretation, 'key' | 'title'>,
  line: string,
  tone: Interpretation['tone'],
): Interpretation {
  return { ...base, lines: [line], tone, summary: null };
}

export interface VisitInterpretations {
  items: Interpretation[];
  /** CLINICAL_CAUTION: shown beside every interpretation. */
  caution: string;
}

function correspondenceItem(angles: SectionFieldValues): Interpretation | null {
  const objective = num(angles, 'objectiveHorizontalDeg');
  const subjective = num(angles, 'subjectiveHorizontalDeg');
  if (objective === undefined && subjective === undefined) return null;
  const base = { key: 'correspondence', title: 'Retinal correspondence' } as const;
  const lines: string[] = [];
  if (objective !== undefined) {
    const vertical = num(angles, 'objectiveVerticalPd');
    const torsion = num(angles, 'objectiveTorsionDeg');
    lines.push(
      `Objective angle: ${
        describeDeviation({
          horizontalDeg: objective,
          ...(vertical === undefined ? {} : { verticalPd: vertical }),
          ...(torsion === undefined ? {} : { torsionDeg: torsion }),
        }).summary
      }.`,
    );
  }
  const result = correspondenceOf(angles);
  if (!result) {
    lines.push(
      'Record both the objective and the subjective horizontal angle to judge correspondence.',
    );
    return { ...base, lines, tone: 'neutral', summary: null };
  }
  if (!result.ok) {
    lines.push(`Not interpreted: ${result.problem}`);
    return { ...base, lines, tone: 'attention', summary: null };
  }
  lines.push(`${result.value.result}: ${result.value.message}`);
  return {
    ...base,
    lines,
    basis: `Angle of anomaly = objective − subjective; tolerance ${result.value.toleranceDeg}° (clinic setting).`,
    tone: result.value.result === 'NRC' ? 'neutral' : 'attention',
    summary: result.value.message,
  };
}

function bsvItem(sections: VisitSectionValues): Interpretation | null {
  const grades = bsvGradesOf(sections);
  if (
    grades.simultaneousPerception === 'not tested' &&
    grades.fusion === 'not tested' &&
    grades.stereopsis === 'not tested' &&
    !grades.stereoNote
  ) {
    return null;
  }
  const grading = `Simultaneous perception ${grades.simultaneousPerception}; fusion ${grades.fusion}; stereopsis ${grades.stereopsis}.`;
  const lines = [grading];
  if (grades.stereoNote) lines.push(grades.stereoNote);
  if (grades.problems.length === 0) lines.push('The grades are consistent with each other.');
  else lines.push(...grades.problems.map((p) => p.message));
  return {
    key: 'bsv',
    title: 'Binocular single vision grades',
    lines,
    tone: grades.problems.length > 0 ? 'attention' : 'neutral',
    summary: grading,
  };
}

function rangesItem(sections: VisitSectionValues): Interpretation | null {
  const base = { key: 'ranges', title: 'Fusional ranges against norms' } as const;
  if (!rangeReadings(sections.fusionalRanges, sections.amblyoscopeAngles)) return null;
  if (num(sections.amblyoscopeAngles, 'subjectiveHorizontalDeg') === undefined) {
    return withoutSummary(
      base,
      'Ranges start at the subjective angle: record it to derive the amplitudes.',
      'neutral',
    );
  }
  const result = fusionalRangesOf(sections.amblyoscopeAngles, sections.fusionalRanges)!;
  if (!result.ok) {
    return withoutSummary(base, `Not interpreted: ${result.problem}`, 'attention');
  }
  const { amplitudes, norms } = result.value;
  const lines = [
    ...amplitudes.amplitudes.map((a) => `${a.text}.`),
    ...norms.comparisons.map((c) => c.message),
    ...norms.flags.map((f) => f.message),
    ...amplitudes.notes,
  ];
  return {
    ...base,
    lines,
    basis: `Norms table: ${norms.tableTitle}, version ${norms.tableVersion}.`,
    tone: norms.flags.length > 0 ? 'attention' : 'neutral',
    summary: lines.join(' '),
  };
}

function nearPointItem(
  sections: VisitSectionValues,
  age: number | undefined,
): Interpretation | null {
  if (num(sections.nearPointConvergence, 'breakCm') === undefined) return null;
  const base = { key: 'npc', title: 'Near point of convergence' } as const;
  if (age === undefined) {
    return withoutSummary(base, 'The age is unknown, so no norm can be chosen.', 'neutral');
  }
  const result = nearPointOf(sections.nearPointConvergence, age)!;
  if (!result.ok) {
    return withoutSummary(base, `Not interpreted: ${result.problem}`, 'attention');
  }
  const judgement = result.value;
  return {
    ...base,
    lines: [
      `${judgement.verdict}${judgement.reasons.length > 0 ? `: ${judgement.reasons.join('; ')}` : ''}.`,
    ],
    basis: `Norm used: ${judgement.normUsed}${judgement.citation ? ` (${judgement.citation})` : ''}.`,
    tone: judgement.verdict === 'receded' ? 'attention' : 'neutral',
    summary: `${judgement.verdict}${judgement.reasons.length > 0 ? ` (${judgement.reasons.join('; ')})` : ''}; compared with ${judgement.normUsed}.`,
  };
}

const AMPLITUDE_FIELDS = [
  ['Right', 'rightAmplitudeD', 'rightNearPointCm'],
  ['Left', 'leftAmplitudeD', 'leftNearPointCm'],
  ['Binocular', 'binocularAmplitudeD', 'binocularNearPointCm'],
] as const;

function accommodationItem(
  sections: VisitSectionValues,
  age: number | undefined,
): Interpretation | null {
  const section = sections.accommodation;
  const recorded = AMPLITUDE_FIELDS.map(([eye, amplitudeField, nearPointField]) => {
    const amplitude = num(section, amplitudeField);
    const nearPointCm = num(section, nearPointField);
    // A push-up near point in cm is an amplitude of 100 / cm dioptres (the dioptre's definition).
    if (amplitude !== undefined) return { eye, amplitude, derived: false };
    if (nearPointCm !== undefined) return { eye, amplitude: 100 / nearPointCm, derived: true };
    return null;
  }).filter((r) => r !== null);
  if (recorded.length === 0) return null;
  const base = { key: 'accommodation', title: 'Amplitude of accommodation for age' } as const;
  if (age === undefined) {
    return withoutSummary(base, 'The age is unknown, so no expected amplitude.', 'neutral');
  }
  const expected = computeOrRefuse(() => accommodationAmplitude(age));
  if (!expected.ok) {
    return withoutSummary(base, `Not interpreted: ${expected.problem}`, 'attention');
  }
  const range = expected.value;
  let attention = false;
  const lines = recorded.map(({ eye, amplitude, derived }) => {
    const shown = `${amplitude.toFixed(1)} D${derived ? ' (from the near point, 100 ÷ cm)' : ''}`;
    const standing =
      amplitude < range.min
        ? 'below the expected minimum'
        : amplitude > range.max
          ? 'above the expected maximum'
          : 'within the expected range';
    if (amplitude < range.min) attention = true;
    return `${eye}: ${shown}, ${standing}.`;
  });
  lines.unshift(
    `Expected at age ${age}: minimum ${range.min.toFixed(1)} D, mean ${range.mean.toFixed(1)} D, maximum ${range.max.toFixed(1)} D${range.heldAtZero ? ' (held at 0 D)' : ''}.`,
  );
  return {
    ...base,
    lines,
    basis: range.source,
    tone: attention ? 'attention' : 'neutral',
    summary: lines.join(' '),
  };
}

const ACUITY_EYES = [
  ['Right', 'right'],
  ['Left', 'left'],
] as const;
const ACUITY_KINDS = [
  ['distance', 'Distance', 'Uncorrected'],
  ['distance', 'Distance', 'Corrected'],
  ['distance', 'Distance', 'Pinhole'],
  ['near', 'Near', 'Uncorrected'],
  ['near', 'Near', 'Corrected'],
  ['near', 'Near', 'Pinhole'],
] as const;

function acuityItem(section: SectionFieldValues): Interpretation | null {
  if (!section) return null;
  const lines: string[] = [];
  for (const [eyeWord, eye] of ACUITY_EYES) {
    for (const [, at, kind] of ACUITY_KINDS) {
      const logMAR = num(section, `${eye}${at}${kind}LogMar`);
      if (logMAR === undefined) continue;
      const entered = read(section, `${eye}${at}${kind}Notation`);
      const line = computeOrRefuse(() => nearestSnellenLine(logMAR, '6 m'));
      lines.push(
        line.ok
          ? `${eyeWord} ${at.toLowerCase()}, ${kind.toLowerCase()}: ${logMAR.toFixed(2)} logMAR (Snellen ${line.value.label}${typeof entered === 'string' && entered !== '' ? `; entered as ${entered}` : ''}).`
          : `${eyeWord} ${at.toLowerCase()}, ${kind.toLowerCase()}: ${line.problem}`,
      );
    }
  }
  if (lines.length === 0) return null;
  return {
    key: 'acuity',
    title: 'Visual acuity',
    lines,
    basis: 'logMAR = −log10(decimal acuity); Snellen shown as the nearest 6 m chart line.',
    tone: 'neutral',
    summary: lines.join(' '),
  };
}

/** Every interpretation the recorded Sections allow, with the caution that goes beside them. */
export function interpretVisit(
  sections: VisitSectionValues,
  options: { ageYears?: number },
): VisitInterpretations {
  const items = [
    correspondenceItem(sections.amblyoscopeAngles),
    bsvItem(sections),
    rangesItem(sections),
    nearPointItem(sections, options.ageYears),
    accommodationItem(sections, options.ageYears),
    acuityItem(sections.visualAcuity),
  ].filter((item): item is Interpretation => item !== null);
  return { items, caution: CLINICAL_CAUTION };
}
