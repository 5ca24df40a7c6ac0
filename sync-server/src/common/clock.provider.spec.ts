// The server's id generator: UUID v7 (RFC 9562) with pooled random bytes.
import { validate, version } from 'uuid';
import { describe, expect, it } from 'vitest';
import { pooledUuidV7Ids } from './clock.provider';

describe('pooled UUID v7 ids', () => {
  it('are valid version 7 UUIDs (checked with the uuid package), all different across pool refills', () => {
    const ids = pooledUuidV7Ids(8);
    const made = Array.from({ length: 5_000 }, () => ids.uuid());
    for (const id of made.slice(0, 50)) {
      expect(validate(id)).toBe(true);
      expect(version(id)).toBe(7);
    }
    expect(new Set(made).size).toBe(made.length);
  });

  it('sort in the order they were made, also within one millisecond (RFC 9562 §6.2 counter)', () => {
    const ids = pooledUuidV7Ids();
    const made = Array.from({ length: 2_000 }, () => ids.uuid());
    expect([...made].sort()).toEqual(made);
  });

  it('carry the time they were made in their first 48 bits', () => {
    const before = Date.now();
    const id = pooledUuidV7Ids().uuid();
    const msecs = parseInt(id.replace(/-/g, '').slice(0, 12), 16);
    expect(msecs).toBeGreaterThanOrEqual(before);
    expect(msecs).toBeLessThanOrEqual(Date.now());
  });
});
