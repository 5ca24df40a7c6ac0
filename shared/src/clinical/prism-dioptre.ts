// Degrees ↔ prism dioptres. Source: the definition of the prism dioptre, Δ = 100·tan θ (Millodot,
// Dictionary of Optometry, "prism dioptre"). The 2Δ-per-degree rule of thumb is a clinic
// convention (common practice; Middle East Afr J Ophthalmol 2015;22(3):265 states about 2Δ per
// degree below 45°), so every converted number carries a label saying which method made it.
import { ClinicalInputError } from './clinical-input.error';
import { oneDecimal, requireAngleDeg, requireFinite } from './validate';

const RADIANS_PER_DEGREE = Math.PI / 180;

/** The rule of thumb is only stated for angles below 45°. */
export const RULE_OF_THUMB_LIMIT_DEG = 45;

export type ConversionMethod = 'exact' | 'rule of thumb';

export interface LabelledConversion {
  value: number;
  unit: 'Δ' | '°';
  method: ConversionMethod;
  /** e.g. "17.6Δ (exact, Δ = 100·tan θ)" */
  label: string;
}

/** Exact: Δ = 100·tan θ. Keeps the sign (+ convergent / R/L / excyclo). */
export function degreesToPrismDioptres(deg: number): number {
  requireAngleDeg('deg', deg);
  return 100 * Math.tan(deg * RADIANS_PER_DEGREE);
}

/** Exact inverse: θ = atan(Δ / 100), in degrees. */
export function prismDioptresToDegrees(pd: number): number {
  requireFinite('pd', pd);
  return Math.atan(pd / 100) / RADIANS_PER_DEGREE;
}

/** Clinic convention 1° ≈ 2Δ, only below 45° where it is stated. */
export function ruleOfThumbPrismDioptres(deg: number): number {
  requireRuleOfThumbDeg('deg', deg);
  return 2 * deg;
}

/** Inverse of the clinic convention: Δ / 2 degrees. */
export function ruleOfThumbDegrees(pd: number): number {
  requireFinite('pd', pd);
  requireRuleOfThumbDeg('pd', pd / 2);
  return pd / 2;
}

function requireRuleOfThumbDeg(field: string, deg: number): void {
  requireFinite(field, deg);
  if (Math.abs(deg) >= RULE_OF_THUMB_LIMIT_DEG) {
    throw new ClinicalInputError(
      field,
      `the 2Δ-per-degree rule of thumb is only stated below ${RULE_OF_THUMB_LIMIT_DEG}°; use the exact conversion (got ${deg}°)`,
    );
  }
}

const METHOD_NOTE: Record<ConversionMethod, string> = {
  exact: 'exact, Δ = 100·tan θ',
  'rule of thumb': 'rule of thumb, 2Δ per degree',
};

/** Degrees → Δ by the clinic's chosen method, labelled for display. */
export function convertDegreesToPrism(
  deg: number,
  method: ConversionMethod = 'exact',
): LabelledConversion {
  const value = method === 'exact' ? degreesToPrismDioptres(deg) : ruleOfThumbPrismDioptres(deg);
  return { value, unit: 'Δ', method, label: `${oneDecimal(value)}Δ (${METHOD_NOTE[method]})` };
}

/** Δ → degrees by the clinic's chosen method, labelled for display. */
export function convertPrismToDegrees(
  pd: number,
  method: ConversionMethod = 'exact',
): LabelledConversion {
  const value = method === 'exact' ? prismDioptresToDegrees(pd) : ruleOfThumbDegrees(pd);
  return { value, unit: '°', method, label: `${oneDecimal(value)}° (${METHOD_NOTE[method]})` };
}
