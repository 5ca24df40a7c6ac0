// Crypto is injected like the clock (docs/conventions.md, boundary 4): password hashing, random
// secrets and the one-way hashes under which refresh tokens, device secrets and enrolment codes
// are stored.
import { createHash, createHmac, hkdfSync, randomBytes, randomInt } from 'node:crypto';
import { hash, verify } from '@node-rs/argon2';

export const SECRETS = Symbol('SECRETS');

export interface Secrets {
  hashPassword(password: string): Promise<string>;
  verifyPassword(passwordHash: string, password: string): Promise<boolean>;
  /** A random URL-safe secret of `bytes` bytes of entropy. */
  randomToken(bytes?: number): string;
  /** `length` characters from an alphabet that survives being read aloud or typed. */
  randomCode(length: number): string;
  /** One-way hash for high-entropy secrets (they need no slow hash). */
  sha256(value: string): string;
  /**
   * A tablet's share of its key protection: 32 bytes (base64) derived from the server's secret
   * and the tablet's id, so nothing needs storing and a copied tablet profile never holds it.
   */
  tabletKeyShare(serverSecret: string, deviceId: string): string;
}

// Crockford's base 32 without I, L, O, U: no letter reads as a digit.
const CODE_ALPHABET = '0123456789ABCDEFGHJKMNPQRSTVWXYZ';

export const nodeSecrets: Secrets = {
  // argon2id with the library's defaults (19 MiB, 2 passes), the OWASP baseline.
  hashPassword: (password) => hash(password),
  verifyPassword: async (passwordHash, password) => {
    try {
      return await verify(passwordHash, password);
    } catch {
      return false;
    }
  },
  randomToken: (bytes = 32) => randomBytes(bytes).toString('base64url'),
  randomCode: (length) =>
    Array.from({ length }, () => CODE_ALPHABET[randomInt(CODE_ALPHABET.length)]).join(''),
  sha256: (value) => createHash('sha256').update(value, 'utf8').digest('hex'),
  tabletKeyShare: (serverSecret, deviceId) => {
    // Its own key, apart from the token-signing use of the same secret.
    const key = Buffer.from(hkdfSync('sha256', serverSecret, '', 'fuselight tablet key share', 32));
    return createHmac('sha256', key).update(deviceId, 'utf8').digest('base64');
  },
};

export const CODE_CHARACTERS = CODE_ALPHABET;
