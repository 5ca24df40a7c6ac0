// Shared input checks for the clinical functions; each throws ClinicalInputError naming the field.
import { ClinicalInputError } from './clinical-input.error';

export function requireFinite(field: string, value: number): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new ClinicalInputError(field, `must be a finite number (got ${String(value)})`);
  }
  return value;
}

export function requireRange(
  field: string,
  value: number,
  min: number,
  max: number,
  { minInclusive = true, maxInclusive = true } = {},
): number {
  requireFinite(field, value);
  const belowMin = minInclusive ? value < min : value <= min;
  const aboveMax = maxInclusive ? value > max : value >= max;
  if (belowMin || aboveMax) {
    const lo = minInclusive ? `${min} ≤` : `${min} <`;
    const hi = maxInclusive ? `≤ ${max}` : `< ${max}`;
    throw new ClinicalInputError(field, `must satisfy ${lo} value ${hi} (got ${value})`);
  }
  return value;
}

export function requirePositive(field: string, value: number): number {
  requireFinite(field, value);
  if (value <= 0) throw new ClinicalInputError(field, `must be greater than zero (got ${value})`);
  return value;
}

export function requireNonNegative(field: string, value: number): number {
  requireFinite(field, value);
  if (value < 0) throw new ClinicalInputError(field, `must not be negative (got ${value})`);
  return value;
}

export function requireNonNegativeInteger(field: string, value: number): number {
  requireNonNegative(field, value);
  if (!Number.isInteger(value)) {
    throw new ClinicalInputError(field, `must be a whole number (got ${value})`);
  }
  return value;
}

/** Angles on the amblyoscope scales are degrees strictly inside ±90°; tan is unbounded at 90°. */
export function requireAngleDeg(field: string, value: number): number {
  return requireRange(field, value, -90, 90, { minInclusive: false, maxInclusive: false });
}

/** One decimal place for display; the stored value keeps full precision. */
export function oneDecimal(value: number): string {
  const rounded = Math.round(value * 10) / 10;
  // Avoid "-0.0" on a chart.
  return (Object.is(rounded, -0) ? 0 : rounded).toFixed(1);
}
