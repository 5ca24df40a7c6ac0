// Gross stereopsis on the amblyoscope as forced-choice trials (docs/clinical-reference.md,
// "Forced-choice stereo trials"): each trial has chance ½ of a right answer by guessing, so the
// chance of k or more right out of n is the Binomial(n, ½) upper tail, computed here exactly
// with integer arithmetic (Σ C(n, i) for i ≥ k, over 2ⁿ).
import { ClinicalInputError } from './clinical-input.error';
import { CLINICAL_CAUTION } from './caution';
import { requireNonNegativeInteger, requireRange } from './validate';

export type StereoPresentation = 'toward' | 'away';

export interface StereoTrial {
  presented: StereoPresentation;
  answer: StereoPresentation;
}

/** Above this the exact tail's denominator no longer fits a double; no sitting runs this long. */
export const MAX_STEREO_TRIALS = 1000;

export const DEFAULT_STEREO_ALPHA = 0.05;

/**
 * A random order of presentations. `random` is injected (returns [0, 1)) so the order cannot be
 * predicted by the patient yet tests can replay it. Each trial is an independent fair choice; we
 * deliberately do not balance or break runs, which would make later trials guessable.
 */
export function stereoTrialSequence(n: number, random: () => number): StereoPresentation[] {
  requireNonNegativeInteger('n', n);
  if (n > MAX_STEREO_TRIALS) {
    throw new ClinicalInputError('n', `must be at most ${MAX_STEREO_TRIALS} trials (got ${n})`);
  }
  const sequence: StereoPresentation[] = [];
  for (let i = 0; i < n; i += 1) {
    const draw = random();
    if (!Number.isFinite(draw) || draw < 0 || draw >= 1) {
      throw new ClinicalInputError('random', `must return a number in [0, 1) (got ${draw})`);
    }
    sequence.push(draw < 0.5 ? 'toward' : 'away');
  }
  return sequence;
}

/** Σ_{i ≥ correct} C(total, i) as an exact integer. */
function upperTailCount(correct: number, total: number): bigint {
  let coefficient = 1n; // C(total, 0)
  let sum = 0n;
  for (let i = 0; i <= total; i += 1) {
    if (i >= correct) sum += coefficient;
    coefficient = (coefficient * BigInt(total - i)) / BigInt(i + 1);
  }
  return sum;
}

function requireCounts(correct: number, total: number): void {
  requireNonNegativeInteger('total', total);
  requireNonNegativeInteger('correct', correct);
  if (total > MAX_STEREO_TRIALS) {
    throw new ClinicalInputError('total', `must be at most ${MAX_STEREO_TRIALS} (got ${total})`);
  }
  if (correct > total) {
    throw new ClinicalInputError('correct', `must not exceed total (${correct} > ${total})`);
  }
}

/** The exact tail as a fraction, for audit or display ("11 in 1024"). */
export function stereoChanceTailFraction(
  correct: number,
  total: number,
): { numerator: bigint; denominator: bigint } {
  requireCounts(correct, total);
  return { numerator: upperTailCount(correct, total), denominator: 1n << BigInt(total) };
}

/** P(X ≥ correct) for X ~ Binomial(total, ½). */
export function stereoChanceTail(correct: number, total: number): number {
  const { numerator, denominator } = stereoChanceTailFraction(correct, total);
  // Both fit a double for total ≤ 1000 (2¹⁰⁰⁰ < 2¹⁰²⁴); the quotient is correctly rounded as
  // long as the integers are, which holds exactly while they are below 2⁵³.
  return Number(numerator) / Number(denominator);
}

export interface StereoVerdict {
  correct: number;
  total: number;
  chanceTail: number;
  alpha: number;
  verdict: 'present' | 'not shown';
  /** Fewest further consecutive right answers that bring the tail below alpha; 0 if present. */
  moreCorrectNeeded: number;
  message: string;
  caution: string;
}

export function stereoVerdict(
  trials: readonly StereoTrial[],
  { alpha = DEFAULT_STEREO_ALPHA }: { alpha?: number } = {},
): StereoVerdict {
  requireRange('alpha', alpha, 0, 1, { minInclusive: false, maxInclusive: false });
  trials.forEach((trial, i) => {
    for (const key of ['presented', 'answer'] as const) {
      if (trial[key] !== 'toward' && trial[key] !== 'away') {
        throw new ClinicalInputError(
          `trials[${i}].${key}`,
          `must be 'toward' or 'away' (got ${String(trial[key])})`,
        );
      }
    }
  });
  const total = trials.length;
  const correct = trials.filter((t) => t.presented === t.answer).length;
  const chanceTail = stereoChanceTail(correct, total);
  const present = chanceTail < alpha;

  let moreCorrectNeeded = 0;
  if (!present) {
    // The tail falls towards 0 as right answers are added with the wrong ones fixed, so this ends.
    while (stereoChanceTail(correct + moreCorrectNeeded, total + moreCorrectNeeded) >= alpha) {
      moreCorrectNeeded += 1;
      if (total + moreCorrectNeeded > MAX_STEREO_TRIALS) {
        throw new ClinicalInputError(
          'alpha',
          `is too small to reach within ${MAX_STEREO_TRIALS} trials`,
        );
      }
    }
  }

  const odds = `${correct} of ${total} right; chance of doing this well by guessing ${formatProbability(chanceTail)}`;
  const message = present
    ? `Gross stereopsis shown: ${odds}, below the threshold ${alpha}.`
    : total === 0
      ? `No trials yet; ${moreCorrectNeeded} consecutive right answers would show gross stereopsis at threshold ${alpha}.`
      : `Gross stereopsis not shown: ${odds}, not below the threshold ${alpha}. ${moreCorrectNeeded} more right answer${moreCorrectNeeded === 1 ? '' : 's'} in a row would settle it.`;
  return {
    correct,
    total,
    chanceTail,
    alpha,
    verdict: present ? 'present' : 'not shown',
    moreCorrectNeeded,
    message,
    caution: CLINICAL_CAUTION,
  };
}

function formatProbability(p: number): string {
  return p >= 0.001 ? p.toFixed(3) : p.toExponential(1);
}
