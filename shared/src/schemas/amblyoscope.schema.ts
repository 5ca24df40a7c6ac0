// Sections captured at the major amblyoscope. Each independently measured fact is its own field
// so that field-level merge keeps both when two tablets edit different ones.
// Sign conventions (docs/clinical-reference.md): horizontal + convergent (eso), − divergent (exo);
// vertical in Δ as read on the vertical scale, + right eye higher; torsion + excyclo, − incyclo.
import { z } from 'zod';
import {
  BSV_RESULTS,
  bsvResultWords,
  choice,
  compositeField,
  measurement,
  text,
  yesNo,
} from './field-types.schema';
import { sectionShape } from './section.schema';

const fixingEyeWords = {
  right: 'Right eye',
  left: 'Left eye',
  alternating: 'Alternating',
} as const;
const suppressingEyeWords = {
  right: 'Right eye',
  left: 'Left eye',
  alternating: 'Alternating',
} as const;

const slideUsed = (label = 'Slide used') => text(label, { max: 120 }).nullish();

/** A horizontal angle or scale position, degrees, + convergent. */
const horizontalDeg = (label: string) =>
  measurement({ label, unit: '°', min: -90, max: 90, signed: true, hint: '+ eso, − exo' });
/** A vertical reading in prism dioptres on the instrument's vertical scale, + right eye higher. */
const verticalPd = (label: string) =>
  measurement({ label, unit: 'Δ', min: -50, max: 50, signed: true, hint: '+ R/L, − L/R' });
/** Torsion in degrees, + excyclo. */
const torsionDeg = (label: string) =>
  measurement({ label, unit: '°', min: -45, max: 45, signed: true, hint: '+ excyclo, − incyclo' });

export const amblyoscopeSetupSchema = z.object({
  ...sectionShape,
  interpupillaryDistanceMm: measurement({
    label: 'Interpupillary distance',
    unit: 'mm',
    min: 40,
    max: 80,
  }).nullish(),
  ownCorrectionWorn: yesNo('Own correction worn').nullish(),
  extraLensesRight: text('Extra lenses, right holder', { max: 120 }).nullish(),
  extraLensesLeft: text('Extra lenses, left holder', { max: 120 }).nullish(),
  fixingEye: choice('Fixing eye', fixingEyeWords, ['right', 'left', 'alternating']).nullish(),
  lockedTube: choice('Locked tube', { right: 'Right tube', left: 'Left tube', none: 'Neither' }, [
    'right',
    'left',
    'none',
  ]).nullish(),
  dialsZeroed: yesNo('Dials zeroed').nullish(),
});

export const simultaneousPerceptionSchema = z.object({
  ...sectionShape,
  result: choice('Simultaneous perception', bsvResultWords, BSV_RESULTS).nullish(),
  suppressingEye: choice('Suppressing eye', suppressingEyeWords, [
    'right',
    'left',
    'alternating',
  ]).nullish(),
  slideUsed: slideUsed(),
});

export const amblyoscopeAnglesSchema = z.object({
  ...sectionShape,
  subjectiveHorizontalDeg: horizontalDeg('Subjective horizontal angle').nullish(),
  subjectiveVerticalPd: verticalPd('Subjective vertical angle').nullish(),
  subjectiveTorsionDeg: torsionDeg('Subjective torsion').nullish(),
  objectiveHorizontalDeg: horizontalDeg('Objective horizontal angle').nullish(),
  objectiveVerticalPd: verticalPd('Objective vertical angle').nullish(),
  objectiveTorsionDeg: torsionDeg('Objective torsion').nullish(),
  slideUsed: slideUsed(),
});

export const suppressionScotomaSchema = z.object({
  ...sectionShape,
  deviatingEye: choice('Eye tested', { right: 'Right eye', left: 'Left eye' }, [
    'right',
    'left',
  ]).nullish(),
  horizontalLostConvergentDeg: horizontalDeg('Picture lost, convergent side').nullish(),
  horizontalLostDivergentDeg: horizontalDeg('Picture lost, divergent side').nullish(),
  verticalLostUpperDeg: measurement({
    label: 'Picture lost, upper',
    unit: '°',
    min: -45,
    max: 45,
    signed: true,
  }).nullish(),
  verticalLostLowerDeg: measurement({
    label: 'Picture lost, lower',
    unit: '°',
    min: -45,
    max: 45,
    signed: true,
  }).nullish(),
  slideUsed: slideUsed(),
});

export const fusionSchema = z.object({
  ...sectionShape,
  result: choice('Fusion', bsvResultWords, BSV_RESULTS).nullish(),
  rightMarkSeen: yesNo('Right control mark seen').nullish(),
  leftMarkSeen: yesNo('Left control mark seen').nullish(),
  slideUsed: slideUsed(),
});

export const fusionalRangesSchema = z.object({
  ...sectionShape,
  divergenceBreakDeg: horizontalDeg('Divergence break').nullish(),
  divergenceRecoveryDeg: horizontalDeg('Divergence recovery').nullish(),
  convergenceBreakDeg: horizontalDeg('Convergence break').nullish(),
  convergenceRecoveryDeg: horizontalDeg('Convergence recovery').nullish(),
  rightUpBreakPd: verticalPd('Right-up vertical break').nullish(),
  rightUpRecoveryPd: verticalPd('Right-up vertical recovery').nullish(),
  leftUpBreakPd: verticalPd('Left-up vertical break').nullish(),
  leftUpRecoveryPd: verticalPd('Left-up vertical recovery').nullish(),
  incycloBreakDeg: torsionDeg('Incyclo break').nullish(),
  incycloRecoveryDeg: torsionDeg('Incyclo recovery').nullish(),
  excycloBreakDeg: torsionDeg('Excyclo break').nullish(),
  excycloRecoveryDeg: torsionDeg('Excyclo recovery').nullish(),
  normsTable: text('Norms table', { max: 120, min: 1 }).nullish(),
  slideUsed: slideUsed(),
});

export const STEREO_PRESENTATIONS = ['toward', 'away'] as const;
const presentationWords = { toward: 'Toward the patient', away: 'Away from the patient' } as const;

/** One forced-choice trial; `presented` and `answer` use the clinical module's words. */
export const grossStereoTrialSchema = z
  .object({
    presented: choice('Trial picture shown', presentationWords, STEREO_PRESENTATIONS),
    answer: choice('Trial answer', presentationWords, STEREO_PRESENTATIONS),
    correct: yesNo('Trial answered correctly'),
  })
  .refine((trial) => trial.correct === (trial.presented === trial.answer), {
    error: 'Trial answered correctly must say whether the answer matched the picture shown',
    path: ['correct'],
  });
export type GrossStereoTrial = z.infer<typeof grossStereoTrialSchema>;

export const grossStereopsisSchema = z.object({
  ...sectionShape,
  // One value: trials are appended by the one clinician running the test.
  trials: compositeField(
    z.array(grossStereoTrialSchema, { error: 'Trials must be a list' }).max(200, {
      error: 'Trials must be at most 200',
    }),
    { label: 'Trials', kind: 'list' },
  ).nullish(),
  slideUsed: slideUsed(),
});
