// Turns a visit's recorded Sections into the computed interpretations the Visit screen shows.
// Every number here comes from @fuselight/shared's clinical functions; this file only picks the
// recorded values, calls them, and words a finding that could not be interpreted.
import {
  AMBLYOSCOPE_FUSIONAL_NORMS,
  CLINICAL_CAUTION,
  ClinicalInputError,
  accommodationAmplitude,
  checkBsvGrades,
  classifyCorrespondence,
  compareWithNorms,
  describeDeviation,
  fusionalRangeAmplitudes,
  judgeNearPointOfConvergence,
  nearestSnellenLine,
  stereoVerdict,
  type BsvGradeStatus,
  type FusionalRangeReadings,
  type RangeReading,
  type SectionCollectionName,
} from '@fuselight/shared';

/** A visit's Sections as stored: collection → field values (any may be missing). */
export type VisitSectionValues = Partial<Record<SectionCollectionName, Record<string, unknown>>>;

export interface Interpretation {
  key: string;
  title: string;
  /** The interpretation in words, or why it could not be made. */
  lines: string[];
  /** Which norms table, formula or cut-off the comparison used. */
  basis?: string;
  tone: 'neutral' | 'attention';
}

export interface InterpretationSummary {
  items: Interpretation[];
  caution: string;
}

function num(section: Record<string, unknown> | undefined, field: string): number | undefined {
  const value = section?.[field];
  return typeof value === 'number' && Number.isFinite(value) ? value : undefined;
}

function words(error: unknown): string {
  if (error instanceof ClinicalInputError) return error.message;
  return error instanceof Error ? error.message : String(error);
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

function correspondence(angles: Record<string, unknown> | undefined): Interpretation | null {
  const objective = num(angles, 'objectiveHorizontalDeg');
  const subjective = num(angles, 'subjectiveHorizontalDeg');
  if (objective === undefined && subjective === undefined) return null;
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
  if (objective === undefined || subjective === undefined) {
    lines.push(
      'Record both the objective and the subjective horizontal angle to judge correspondence.',
    );
    return { key: 'correspondence', title: 'Retinal correspondence', lines, tone: 'neutral' };
  }
  try {
    const result = classifyCorrespondence({ objectiveDeg: objective, subjectiveDeg: subjective });
    lines.push(`${result.result}: ${result.message}`);
    return {
      key: 'correspondence',
      title: 'Retinal correspondence',
      lines,
      basis: `Angle of anomaly = objective − subjective; tolerance ${result.toleranceDeg}° (clinic setting).`,
      tone: result.result === 'NRC' ? 'neutral' : 'attention',
    };
  } catch (error) {
    lines.push(`Not interpreted: ${words(error)}`);
    return { key: 'correspondence', title: 'Retinal correspondence', lines, tone: 'attention' };
  }
}

function gradeOf(value: unknown): BsvGradeStatus {
  if (value === 'present') return 'present';
  if (value === 'absent') return 'absent';
  return 'not tested';
}

function stereopsisGrade(sections: VisitSectionValues): { status: BsvGradeStatus; note?: string } {
  const stereo = sections.stereoacuity;
  if (num(stereo, 'valueArcsec') !== undefined) return { status: 'present' };
  if (stereo?.noneDetected === true) return { status: 'absent' };
  const trials = sections.grossStereopsis?.trials;
  if (Array.isArray(trials) && trials.length > 0) {
    try {
      const verdict = stereoVerdict(trials as Parameters<typeof stereoVerdict>[0]);
      return {
        status: verdict.verdict === 'present' ? 'present' : 'not tested',
        note: verdict.message,
      };
    } catch (error) {
      return { status: 'not tested', note: `Gross stereopsis not interpreted: ${words(error)}` };
    }
  }
  return { status: 'not tested' };
}

function bsv(sections: VisitSectionValues): Interpretation | null {
  const sp = gradeOf(sections.simultaneousPerception?.result);
  const fusion = gradeOf(sections.fusion?.result);
  const stereo = stereopsisGrade(sections);
  if (
    sp === 'not tested' &&
    fusion === 'not tested' &&
    stereo.status === 'not tested' &&
    !stereo.note
  ) {
    return null;
  }
  const lines = [`Simultaneous perception ${sp}; fusion ${fusion}; stereopsis ${stereo.status}.`];
  if (stereo.note) lines.push(stereo.note);
  const problems = checkBsvGrades({
    simultaneousPerception: sp,
    fusion,
    stereopsis: stereo.status,
  });
  if (problems.length === 0) lines.push('The grades are consistent with each other.');
  else lines.push(...problems.map((p) => p.message));
  return {
    key: 'bsv',
    title: 'Binocular single vision grades',
    lines,
    tone: problems.length > 0 ? 'attention' : 'neutral',
  };
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
  ranges: Record<string, unknown> | undefined,
  angles: Record<string, unknown> | undefined,
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

function fusionalRanges(sections: VisitSectionValues): Interpretation | null {
  const picked = rangeReadings(sections.fusionalRanges, sections.amblyoscopeAngles);
  if (!picked) return null;
  const title = 'Fusional ranges against norms';
  if (picked.subjective === undefined) {
    return {
      key: 'ranges',
      title,
      lines: ['Ranges start at the subjective angle: record it to derive the amplitudes.'],
      tone: 'neutral',
    };
  }
  try {
    const amplitudes = fusionalRangeAmplitudes({
      ...picked.readings,
      subjectiveAngleDeg: picked.subjective,
    });
    const report = compareWithNorms(amplitudes.measurements, AMBLYOSCOPE_FUSIONAL_NORMS);
    const lines = [
      ...amplitudes.amplitudes.map((a) => `${a.text}.`),
      ...report.comparisons.map((c) => c.message),
      ...report.flags.map((f) => f.message),
      ...amplitudes.notes,
    ];
    return {
      key: 'ranges',
      title,
      lines,
      basis: `Norms table: ${report.tableTitle}, version ${report.tableVersion}.`,
      tone: report.flags.length > 0 ? 'attention' : 'neutral',
    };
  } catch (error) {
    return { key: 'ranges', title, lines: [`Not interpreted: ${words(error)}`], tone: 'attention' };
  }
}

function nearPoint(sections: VisitSectionValues, age: number | undefined): Interpretation | null {
  const breakCm = num(sections.nearPointConvergence, 'breakCm');
  if (breakCm === undefined) return null;
  const title = 'Near point of convergence';
  if (age === undefined) {
    return {
      key: 'npc',
      title,
      lines: ['The age is unknown, so no norm can be chosen.'],
      tone: 'neutral',
    };
  }
  const recoveryCm = num(sections.nearPointConvergence, 'recoveryCm');
  try {
    const judgement = judgeNearPointOfConvergence({
      breakCm,
      ageYears: age,
      ...(recoveryCm === undefined ? {} : { recoveryCm }),
    });
    const lines = [
      `${judgement.verdict}${judgement.reasons.length > 0 ? `: ${judgement.reasons.join('; ')}` : ''}.`,
    ];
    return {
      key: 'npc',
      title,
      lines,
      basis: `Norm used: ${judgement.normUsed}${judgement.citation ? ` (${judgement.citation})` : ''}.`,
      tone: judgement.verdict === 'receded' ? 'attention' : 'neutral',
    };
  } catch (error) {
    return { key: 'npc', title, lines: [`Not interpreted: ${words(error)}`], tone: 'attention' };
  }
}

const AMPLITUDE_FIELDS = [
  ['Right', 'rightAmplitudeD', 'rightNearPointCm'],
  ['Left', 'leftAmplitudeD', 'leftNearPointCm'],
  ['Binocular', 'binocularAmplitudeD', 'binocularNearPointCm'],
] as const;

function accommodation(
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
  const title = 'Amplitude of accommodation for age';
  if (age === undefined) {
    return {
      key: 'accommodation',
      title,
      lines: ['The age is unknown, so no expected amplitude.'],
      tone: 'neutral',
    };
  }
  try {
    const expected = accommodationAmplitude(age);
    let attention = false;
    const lines = recorded.map(({ eye, amplitude, derived }) => {
      const shown = `${amplitude.toFixed(1)} D${derived ? ' (from the near point, 100 ÷ cm)' : ''}`;
      const standing =
        amplitude < expected.min
          ? 'below the expected minimum'
          : amplitude > expected.max
            ? 'above the expected maximum'
            : 'within the expected range';
      if (amplitude < expected.min) attention = true;
      return `${eye}: ${shown}, ${standing}.`;
    });
    lines.unshift(
      `Expected at age ${age}: minimum ${expected.min.toFixed(1)} D, mean ${expected.mean.toFixed(1)} D, maximum ${expected.max.toFixed(1)} D${expected.heldAtZero ? ' (held at 0 D)' : ''}.`,
    );
    return {
      key: 'accommodation',
      title,
      lines,
      basis: expected.source,
      tone: attention ? 'attention' : 'neutral',
    };
  } catch (error) {
    return {
      key: 'accommodation',
      title,
      lines: [`Not interpreted: ${words(error)}`],
      tone: 'attention',
    };
  }
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

function acuity(section: Record<string, unknown> | undefined): Interpretation | null {
  if (!section) return null;
  const lines: string[] = [];
  for (const [eyeWord, eye] of ACUITY_EYES) {
    for (const [, at, kind] of ACUITY_KINDS) {
      const field = `${eye}${at}${kind}LogMar`;
      const logMAR = num(section, field);
      if (logMAR === undefined) continue;
      const entered = section[`${eye}${at}${kind}Notation`];
      try {
        const line = nearestSnellenLine(logMAR, '6 m');
        lines.push(
          `${eyeWord} ${at.toLowerCase()}, ${kind.toLowerCase()}: ${logMAR.toFixed(2)} logMAR (Snellen ${line.label}${typeof entered === 'string' && entered !== '' ? `; entered as ${entered}` : ''}).`,
        );
      } catch (error) {
        lines.push(`${eyeWord} ${at.toLowerCase()}, ${kind.toLowerCase()}: ${words(error)}`);
      }
    }
  }
  if (lines.length === 0) return null;
  return {
    key: 'acuity',
    title: 'Visual acuity',
    lines,
    basis: 'logMAR = −log10(decimal acuity); Snellen shown as the nearest 6 m chart line.',
    tone: 'neutral',
  };
}

/** Every interpretation the recorded Sections allow, with the caution that goes beside them. */
export function interpretVisit(
  sections: VisitSectionValues,
  options: { ageYears?: number },
): InterpretationSummary {
  const items = [
    correspondence(sections.amblyoscopeAngles),
    bsv(sections),
    fusionalRanges(sections),
    nearPoint(sections, options.ageYears),
    accommodation(sections, options.ageYears),
    acuity(sections.visualAcuity),
  ].filter((item): item is Interpretation => item !== null);
  return { items, caution: CLINICAL_CAUTION };
}
