// What a PIN may be: at least 6 digits, or a passphrase. Plain code, no schema library, so the
// PIN lock on the first screen's path does not load one; the forms' zod schemas
// (pin-schemas.ts) apply the same rule.

/** The shortest passphrase accepted in place of a PIN. */
export const PASSPHRASE_MIN_LENGTH = 12;

export const PIN_RULE = `A PIN is at least 6 digits, or a passphrase of at least ${PASSPHRASE_MIN_LENGTH} characters`;

/** At least 6 digits, or a passphrase of at least PASSPHRASE_MIN_LENGTH characters. */
export function isAcceptablePin(value: unknown): value is string {
  return (
    typeof value === 'string' &&
    (/^\d{6,}$/.test(value) || value.trim().length >= PASSPHRASE_MIN_LENGTH)
  );
}
