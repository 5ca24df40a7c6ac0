import { afterEach, describe, expect, it } from 'vitest';
import { AuthDb, type PersonSession } from '../auth-db';
import { PinLock } from './pin-lock';

const HOUR = 3_600_000;
const opened: AuthDb[] = [];

afterEach(async () => {
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

function setUp() {
  const db = new AuthDb(`pin-lock-${crypto.randomUUID()}`);
  opened.push(db);
  const clock = { now: Date.UTC(2026, 11, 1, 8, 0) };
  let published = 0;
  const lock = new PinLock({
    db: () => db,
    now: () => clock.now,
    publish: () => {
      published += 1;
    },
  });
  const person = {
    userId: 'amara',
    confirmedAt: clock.now,
    signInRequired: null,
  } as unknown as PersonSession;
  return { db, clock, lock, person, published: () => published };
}

describe('the PIN lock on its own', () => {
  it('unlocks with the right PIN, keeps it hashed, and survives a reload from the database', async () => {
    const { db, lock, person, clock } = setUp();
    await lock.setPin('amara', '482913');
    const stored = await db.pins.get('amara');
    expect(JSON.stringify(stored)).not.toContain('482913');
    expect(await lock.check('amara', person, '482913', true)).toEqual({ ok: true });

    const again = new PinLock({ db: () => db, now: () => clock.now, publish: () => undefined });
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
    await lock.setPolicy({ offlineUnlockHours: 0, maxPinAttempts: 0.5, unsyncedWarningHours: 0 });
    expect(lock.policy).toEqual({
      offlineUnlockHours: 72,
      maxPinAttempts: 5,
      unsyncedWarningHours: 24,
    });
    await lock.setPolicy({ offlineUnlockHours: 8, maxPinAttempts: 3.7, unsyncedWarningHours: 6 });
    expect(lock.policy).toEqual({
      offlineUnlockHours: 8,
      maxPinAttempts: 3,
      unsyncedWarningHours: 6,
    });
    await lock.setPin('amara', '482913');
    lock.clear();
    expect(lock.hasPin('amara')).toBe(false);
    expect(lock.policy).toEqual({
      offlineUnlockHours: 72,
      maxPinAttempts: 5,
      unsyncedWarningHours: 24,
    });
  });
});
