// A server restored from a backup (scripts/restore.mjs) holds only what the backup held, and its
// next versions reuse numbers some tablets were already sent. A tablet whose cursor is above what
// the restore kept is told to pull from the start (reason `restored`) until it does; a tablet
// at or below it goes on as before; tablets marked after the restore are left alone.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isPullReset } from '@fuselight/shared';
import { sqlRows } from '../database/sql';
import type { TestApp } from '../testing/test-app';
import { cursorReset } from './sync.service';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
  type Tablet,
} from './testing/sync-test-kit';

let t: TestApp;
beforeAll(async () => {
  t = await createSyncTestApp();
});
afterAll(async () => {
  await t.close();
});

async function pushOne(tablet: Tablet): Promise<number> {
  const body = await tablet.pushOk([
    tablet.change({ recordId: newId(), fields: patientFields(SITE_A) }),
  ]);
  const result = body.results[0];
  if (!result || result.status !== 'applied') throw new Error('push not applied');
  return result.version;
}

/** What scripts/restore.mjs records after pg_restore. */
async function markRestored(through: number): Promise<void> {
  await sqlRows(
    t.em(),
    `update "sync_timeline" set "generation" = "generation" + 1, "restored_through" = ?, "restored_at" = now(), "restored_from" = 'test.dump'`,
    [through],
  );
}

describe('pulls after a restore from a backup', () => {
  it('sends tablets ahead of the restored server back to the start, once, and no others', async () => {
    const writer = await tabletFor(t, 'orthoptist', [SITE_A]);
    const behind = await tabletFor(t, 'orthoptist', [SITE_A]);
    const ahead = await tabletFor(t, 'orthoptist', [SITE_A]);
    const first = await pushOne(writer);
    const second = await pushOne(writer);
    // Both tablets pulled once in the old timeline.
    expect(isPullReset(await behind.pullOk(0))).toBe(false);
    expect(isPullReset(await ahead.pullOk(0))).toBe(false);

    // The backup held everything up to `first`.
    await markRestored(first);

    expect(await ahead.pullOk(second)).toEqual({ reset: true, reason: 'restored' });
    // Asked again with the old cursor (the answer was lost): still a reset.
    expect(await ahead.pullOk(second)).toEqual({ reset: true, reason: 'restored' });
    const fromStart = await ahead.pullOk(0);
    if (isPullReset(fromStart)) throw new Error('a pull from the start was reset');
    // Now current: a cursor above the restored point is its own again.
    const third = await pushOne(writer);
    const later = await ahead.pullOk(fromStart.cursor);
    if (isPullReset(later)) throw new Error('a current tablet was reset');
    expect(later.records.map((r) => r.version)).toEqual([third]);

    // A tablet at the restored point goes on without a reset, and is marked current.
    const page = await behind.pullOk(first);
    if (isPullReset(page)) throw new Error('a tablet behind the restore was reset');
    expect(page.records.map((r) => r.version)).toContain(third);
    const [marks] = await sqlRows<{ generation: number }>(
      t.em(),
      `select "timeline_generation" as "generation" from "device" where "id" = ?::uuid`,
      [behind.caller.deviceId],
    );
    expect(marks?.generation).toBe(1);
  });

  it('decides by the cursor, the horizon, the epoch and the restore (unit)', () => {
    const head = {
      horizon: 0,
      epoch: 2,
      deviceGeneration: 0,
      generation: 1,
      restoredThrough: 5000,
    };
    expect(cursorReset(0, head)).toBeNull();
    expect(cursorReset(5000, head)).toBeNull();
    expect(cursorReset(5001, head)).toEqual({ reset: true, reason: 'restored' });
    expect(cursorReset(5001, { ...head, deviceGeneration: 1 })).toBeNull();
    expect(cursorReset(5001, { ...head, deviceGeneration: null })).toBeNull();
    expect(cursorReset(10, { ...head, horizon: 11 })).toEqual({ reset: true, reason: 'horizon' });
    expect(cursorReset(10, { ...head, epoch: 1 })).toEqual({ reset: true, reason: 'cursor-epoch' });
  });
});
