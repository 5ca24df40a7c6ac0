// Dates in letters, written out in words from ISO strings (no clock, no locale: the same letter
// reads the same on the tablet and the server).
import { ClinicalInputError } from '../clinical/clinical-input.error';

const MONTHS = [
  'January',
  'February',
  'March',
  'April',
  'May',
  'June',
  'July',
  'August',
  'September',
  'October',
  'November',
  'December',
] as const;

function parts(field: string, iso: string): { y: number; m: number; d: number } {
  const match = /^(\d{4})-(\d{2})-(\d{2})/.exec(iso);
  const m = match ? Number(match[2]) : 0;
  if (!match || m < 1 || m > 12) {
    throw new ClinicalInputError(
      field,
      `must be a date written YYYY-MM-DD (got ${JSON.stringify(iso)})`,
    );
  }
  return { y: Number(match[1]), m, d: Number(match[3]) };
}

/** "2026-12-01" → "1 December 2026". */
export function longDate(iso: string, field = 'date'): string {
  const { y, m, d } = parts(field, iso);
  return `${d} ${MONTHS[m - 1]} ${y}`;
}

/** "2026-12-01" → "1 Dec 2026" (chart labels). */
export function shortDate(iso: string, field = 'date'): string {
  const { y, m, d } = parts(field, iso);
  return `${d} ${MONTHS[m - 1]!.slice(0, 3)} ${y}`;
}

/** Whole years between a date of birth and a later date, both YYYY-MM-DD. */
export function ageInYears(dateOfBirth: string, on: string): number {
  const b = parts('dateOfBirth', dateOfBirth);
  const t = parts('date', on);
  let age = t.y - b.y;
  if (t.m < b.m || (t.m === b.m && t.d < b.d)) age -= 1;
  return Math.max(0, age);
}
