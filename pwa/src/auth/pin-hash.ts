// The PBKDF2-HMAC-SHA-256 hash that PINs set before the tablet was protected were stored as. Such a hash is only verified
// once more, at the PIN's next unlock, which moves it into an argon2id key slot
// (pwa/src/data/crypto/key-slots.ts) and deletes the hash. The PIN itself is never stored or
// logged. What a PIN may be is pin-rule.ts.
export { PASSPHRASE_MIN_LENGTH, PIN_RULE, isAcceptablePin } from './pin-rule';

/** OWASP's 2021 figure for PBKDF2-HMAC-SHA-256; the brief's floor is 100 000. */
export const PIN_HASH_ITERATIONS = 310_000;
const SALT_BYTES = 16;
const HASH_BITS = 256;

export interface PinHash {
  salt: string;
  hash: string;
  iterations: number;
}

const toBase64 = (bytes: Uint8Array): string => btoa(String.fromCharCode(...bytes));
const fromBase64 = (text: string): Uint8Array<ArrayBuffer> =>
  Uint8Array.from(atob(text), (c) => c.charCodeAt(0));

async function derive(
  pin: string,
  salt: Uint8Array<ArrayBuffer>,
  iterations: number,
): Promise<Uint8Array> {
  const key = await crypto.subtle.importKey('raw', new TextEncoder().encode(pin), 'PBKDF2', false, [
    'deriveBits',
  ]);
  const bits = await crypto.subtle.deriveBits(
    { name: 'PBKDF2', hash: 'SHA-256', salt, iterations },
    key,
    HASH_BITS,
  );
  return new Uint8Array(bits);
}

export async function hashPin(pin: string, iterations = PIN_HASH_ITERATIONS): Promise<PinHash> {
  if (iterations < 100_000) throw new Error('PIN hashing needs at least 100 000 iterations');
  const salt = crypto.getRandomValues(new Uint8Array(SALT_BYTES));
  return { salt: toBase64(salt), hash: toBase64(await derive(pin, salt, iterations)), iterations };
}

export async function verifyPin(pin: string, stored: PinHash): Promise<boolean> {
  const derived = await derive(pin, fromBase64(stored.salt), stored.iterations);
  const expected = fromBase64(stored.hash);
  if (derived.length !== expected.length) return false;
  // Compare every byte so the time taken does not say how much of the PIN was right.
  let difference = 0;
  for (let i = 0; i < derived.length; i += 1) difference |= derived[i]! ^ expected[i]!;
  return difference === 0;
}
