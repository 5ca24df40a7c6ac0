// Binocular disparity of a depth step (docs/clinical-reference.md, "Stereoacuity"): the small-angle
// form η ≈ a·Δz / z² radians for interocular distance a, viewing distance z and depth difference
// Δz, × 206,264.8 for seconds of arc. The exact form (difference of the two vergence angles) is
// offered for large depth steps where the small-angle form drifts.
import { ClinicalInputError } from './clinical-input.error';
import { requirePositive } from './validate';

export const ARCSEC_PER_RADIAN = 206264.8;

export interface StereoDisparityInput {
  interocularMm: number;
  viewingDistanceMm: number;
  depthMm: number;
}

function validate({ interocularMm, viewingDistanceMm, depthMm }: StereoDisparityInput): void {
  requirePositive('interocularMm', interocularMm);
  requirePositive('viewingDistanceMm', viewingDistanceMm);
  requirePositive('depthMm', depthMm);
  if (depthMm >= viewingDistanceMm) {
    throw new ClinicalInputError(
      'depthMm',
      `must be less than the viewing distance (${depthMm} ≥ ${viewingDistanceMm})`,
    );
  }
}

/** Small-angle disparity in seconds of arc. */
export function stereoDisparityArcsec(input: StereoDisparityInput): number {
  validate(input);
  const { interocularMm, viewingDistanceMm, depthMm } = input;
  return ((interocularMm * depthMm) / viewingDistanceMm ** 2) * ARCSEC_PER_RADIAN;
}

/** Exact disparity: vergence to the nearer point minus vergence to the farther one. */
export function stereoDisparityExactArcsec(input: StereoDisparityInput): number {
  validate(input);
  const { interocularMm, viewingDistanceMm, depthMm } = input;
  const vergence = (z: number): number => 2 * Math.atan(interocularMm / (2 * z));
  return (vergence(viewingDistanceMm - depthMm) - vergence(viewingDistanceMm)) * ARCSEC_PER_RADIAN;
}
