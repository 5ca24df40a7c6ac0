// Expected amplitude of accommodation by age, Hofstetter (1950), in dioptres:
// minimum 15 − 0.25·age, mean 18.5 − 0.30·age, maximum 25 − 0.40·age.
import { requireRange } from './validate';

export interface AccommodationAmplitude {
  min: number;
  mean: number;
  max: number;
  /** True when a formula went below zero and was held at 0 D (presbyopic ages). */
  heldAtZero: boolean;
  source: string;
}

export const HOFSTETTER_SOURCE =
  'Hofstetter (1950): min 15 − 0.25·age, mean 18.5 − 0.30·age, max 25 − 0.40·age';

export function accommodationAmplitude(ageYears: number): AccommodationAmplitude {
  requireRange('ageYears', ageYears, 0, 130);
  const raw = {
    min: 15 - 0.25 * ageYears,
    mean: 18.5 - 0.3 * ageYears,
    max: 25 - 0.4 * ageYears,
  };
  // An amplitude cannot be negative; the straight lines simply stop meaning anything there.
  const heldAtZero = raw.min < 0 || raw.mean < 0 || raw.max < 0;
  return {
    min: Math.max(0, raw.min),
    mean: Math.max(0, raw.mean),
    max: Math.max(0, raw.max),
    heldAtZero,
    source: HOFSTETTER_SOURCE,
  };
}
