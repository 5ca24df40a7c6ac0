import { afterEach, describe, expect, it } from 'vitest';
import { DataKeyVault } from '../../data/crypto/data-key-vault';
import { KeyRing } from '../../data/crypto/key-ring';
import { FuselightDb } from '../../data/db';
import { AuthDb, type PersonSession } from '../auth-db';
import { PinLock } from './pin-lock';

const HOUR = 3_600_000;
const opened: Array<AuthDb | FuselightDb> = [];

afterEach(async () => {
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

function setUp() {
  const db = new AuthDb(`pin-lock-${crypto.randomUUID()}`);
  const records = new FuselightDb(`pin-lock-records-${crypto.randomUUID()}`, new DataKeyVault());
  opened.push(db, records);
  const keys = new KeyRing({
    db: () => records,
    sealed: () => [{ db: records, tables: ['records', 'outbox'] }],
    vault: records.vault,
  });
  const clock = { now: Date.UTC(2026, 11, 1, 8, 0) };
  let published = 0;
  const lock = new PinLock({
    db: () => db,
    now: () => clock.now,
    publish: () => {
      published += 1;
    },
    keys,
  });
  const person = {
    userId: 'amara',
    confirmedAt: clock.now,
    signInRequired: null,
  } as unknown as PersonSession;
  return { db, records, keys, clock, lock, person, published: () => published };
}

describe('the PIN lock on its own', () => {
  it('unlocks with the right PIN, keeps it hashed, and survives a reload from the database', async () => {
    const { db, lock, person, clock, keys } = setUp();
    await lock.setPin('amara', '482913');
    const stored = await db.pins.get('amara');
    expect(JSON.stringify(stored)).not.toContain('482913');
    expect(await lock.check('amara', person, '482913', true)).toEqual({ ok: true });

    const again = new PinLock({
      db: () => db,
      now: () => clock.now,
      publish: () => undefined,
      keys,
    });
    await again.load();
    expect(again.hasPin('amara')).toBe(true);
    expect(again.status(person, true)).toMatchObject({ hasPin: true, canUnlockWithPin: true });
  });

  it('counts wrong PINs down to a lock-out that a correct PIN no longer lifts', async () => {
    const { lock, person, published } = setUp();
    await lock.setPolicy({ maxPinAttempts: 2 });
    await lock.setPin('amara', '482913');
    expect(await lock.check('amara', person, '000000', true)).toMatchObject({
      ok: false,
      reason: 'wrong-pin',
      attemptsLeft: 1,
    });
    expect(await lock.check('amara', person, '000001', true)).toMatchObject({
      ok: false,
      reason: 'locked-out',
    });
    expect(await lock.check('amara', person, '482913', true)).toMatchObject({
      ok: false,
      reason: 'locked-out',
    });
    expect(published()).toBe(2);
    await lock.writeAttemptsCleared('amara');
    lock.noteAttemptsCleared('amara');
    expect(await lock.check('amara', person, '482913', true)).toEqual({ ok: true });
  });

  it('refuses once the offline window has closed, and on a tablet that is not enrolled', async () => {
    const { lock, person, clock } = setUp();
    await lock.setPin('amara', '482913');
    expect(await lock.check('amara', person, '482913', false)).toMatchObject({
      reason: 'not-enrolled',
    });
    clock.now += 72 * HOUR + 1;
    expect(lock.status(person, true).canUnlockWithPin).toBe(false);
    expect(await lock.check('amara', person, '482913', true)).toMatchObject({
      reason: 'window-closed',
    });
  });

  it('ignores a policy out of range and forgets everything when cleared', async () => {
    const { lock } = setUp();
    await lock.setPolicy({
      offlineUnlockHours: 0,
      maxPinAttempts: 0.5,
      idleLockMinutes: 0,
      unsyncedWarningHours: 0,
      // A passphrase rule under the floor is ignored, as a server's garbled setting would be.
      unlockWithoutHardware: { rule: 'passphrase', minLength: 4, requiredClasses: [] },
    });
    const defaults = {
      offlineUnlockHours: 72,
      maxPinAttempts: 5,
      idleLockMinutes: 5,
      unsyncedWarningHours: 24,
      unlockWithoutHardware: { rule: 'pin-only' },
    };
    expect(lock.policy).toEqual(defaults);
    await lock.setPolicy({
      offlineUnlockHours: 8,
      maxPinAttempts: 3.7,
      idleLockMinutes: 2,
      unsyncedWarningHours: 6,
      unlockWithoutHardware: { rule: 'passphrase', minLength: 16, requiredClasses: ['digit'] },
    });
    expect(lock.policy).toEqual({
      offlineUnlockHours: 8,
      maxPinAttempts: 3,
      idleLockMinutes: 2,
      unsyncedWarningHours: 6,
      unlockWithoutHardware: { rule: 'passphrase', minLength: 16, requiredClasses: ['digit'] },
    });
    await lock.setPin('amara', 'quiet harbour lights 7');
    lock.clear();
    expect(lock.hasPin('amara')).toBe(false);
    expect(lock.policy).toEqual(defaults);
  });
});
