// Time and ids are injected so tests can control them (docs/conventions.md, boundary 4: the clock,
// ids and crypto are providers).
import { randomFillSync } from 'node:crypto';
import { v7 as uuidv7 } from 'uuid';

export const CLOCK = Symbol('CLOCK');
export const IDS = Symbol('IDS');

export interface Clock {
  now(): Date;
}

export interface IdGenerator {
  /** A UUID version 7, so ids sort by creation time. */
  uuid(): string;
}

export const systemClock: Clock = { now: () => new Date() };
/**
 * UUID v7 ids from the `uuid` package, with their random bytes drawn from a pooled
 * `randomFillSync` buffer: the package's default asks WebCrypto for 16 bytes per id, which cost
 * more than the rest of building a push's audit rows (~7 µs against ~1.5 µs an id here). Ids stay
 * monotonic within a millisecond the way the package keeps them (a random 31-bit counter started
 * each millisecond and incremented after).
 */
export function pooledUuidV7Ids(poolIds = 512): IdGenerator {
  const pool = new Uint8Array(16 * poolIds);
  let at = pool.length;
  let msecs = -Infinity;
  let seq = 0;
  return {
    uuid() {
      if (at === pool.length) {
        randomFillSync(pool);
        at = 0;
      }
      const random = pool.subarray(at, at + 16);
      at += 16;
      const now = Date.now();
      if (now > msecs) {
        msecs = now;
        seq =
          (((random[6] ?? 0) & 0x7f) << 24) |
          ((random[7] ?? 0) << 16) |
          ((random[8] ?? 0) << 8) |
          (random[9] ?? 0);
      } else {
        seq = (seq + 1) | 0;
        if (seq === 0) msecs += 1;
      }
      return uuidv7({ random, msecs, seq });
    },
  };
}

export const uuidV7Ids: IdGenerator = pooledUuidV7Ids();
