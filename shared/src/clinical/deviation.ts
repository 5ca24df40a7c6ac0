// The trade's words for a measured deviation, from the stored signs (docs/clinical-reference.md,
// "Conventions"): horizontal + convergent (eso) / − divergent (exo), vertical + right eye higher
// (R/L) / − left eye higher (L/R), torsion + excyclo / − incyclo. Horizontal and vertical
// magnitudes are shown in both degrees and Δ by the exact prism dioptre definition (Δ = 100·tan θ).
import { degreesToPrismDioptres, prismDioptresToDegrees } from './prism-dioptre';
import { oneDecimal, requireAngleDeg, requireFinite } from './validate';

export type DeviationEye = 'right' | 'left' | 'alternating';

export interface DeviationInput {
  horizontalDeg?: number;
  verticalPd?: number;
  torsionDeg?: number;
  /** The eye the deviation is recorded for (the deviating eye), if known. */
  eye?: DeviationEye;
}

export interface DeviationComponent<Term extends string> {
  term: Term;
  /** Unsigned magnitude; the sign is carried by the term. */
  degrees: number;
  /** Unsigned magnitude in Δ; absent for torsion, which prisms do not measure. */
  prismDioptres?: number;
  text: string;
}

export interface DeviationDescription {
  horizontal?: DeviationComponent<'eso' | 'exo' | 'no horizontal deviation'>;
  vertical?: DeviationComponent<'R/L' | 'L/R' | 'no vertical deviation'>;
  torsion?: DeviationComponent<'excyclo' | 'incyclo' | 'no torsion'>;
  eye?: DeviationEye;
  /** e.g. "Left eye: eso 12.0° (21.3Δ); R/L 4.0Δ (2.3°); excyclo 3.0°" */
  summary: string;
}

const EYE_WORDS: Record<DeviationEye, string> = {
  right: 'Right eye',
  left: 'Left eye',
  alternating: 'Alternating',
};

export function describeDeviation({
  horizontalDeg,
  verticalPd,
  torsionDeg,
  eye,
}: DeviationInput): DeviationDescription {
  const description: DeviationDescription = { summary: '' };
  const parts: string[] = [];

  if (horizontalDeg !== undefined) {
    requireAngleDeg('horizontalDeg', horizontalDeg);
    const degrees = Math.abs(horizontalDeg);
    const prismDioptres = Math.abs(degreesToPrismDioptres(horizontalDeg));
    const term = horizontalDeg > 0 ? 'eso' : horizontalDeg < 0 ? 'exo' : 'no horizontal deviation';
    const text =
      term === 'no horizontal deviation'
        ? term
        : `${term} ${oneDecimal(degrees)}° (${oneDecimal(prismDioptres)}Δ)`;
    description.horizontal = { term, degrees, prismDioptres, text };
    parts.push(text);
  }

  if (verticalPd !== undefined) {
    requireFinite('verticalPd', verticalPd);
    const prismDioptres = Math.abs(verticalPd);
    const degrees = Math.abs(prismDioptresToDegrees(verticalPd));
    const term = verticalPd > 0 ? 'R/L' : verticalPd < 0 ? 'L/R' : 'no vertical deviation';
    const text =
      term === 'no vertical deviation'
        ? term
        : `${term} ${oneDecimal(prismDioptres)}Δ (${oneDecimal(degrees)}°)`;
    description.vertical = { term, degrees, prismDioptres, text };
    parts.push(text);
  }

  if (torsionDeg !== undefined) {
    requireAngleDeg('torsionDeg', torsionDeg);
    const degrees = Math.abs(torsionDeg);
    const term = torsionDeg > 0 ? 'excyclo' : torsionDeg < 0 ? 'incyclo' : 'no torsion';
    const text = term === 'no torsion' ? term : `${term} ${oneDecimal(degrees)}°`;
    description.torsion = { term, degrees, text };
    parts.push(text);
  }

  if (eye !== undefined) description.eye = eye;
  const body = parts.length > 0 ? parts.join('; ') : 'no deviation recorded';
  description.summary = eye === undefined ? body : `${EYE_WORDS[eye]}: ${body}`;
  return description;
}
