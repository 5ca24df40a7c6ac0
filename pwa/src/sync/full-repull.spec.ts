// The tablet's record of a full re-pull: the cursor goes back to 0 in the same write, a re-pull
// cut short keeps its start and count, its end is recorded, and a reset's reason is read safely.
import { afterEach, describe, expect, it } from 'vitest';
import { FuselightDb } from '../data/db';
import {
  beginFullRepull,
  describeFullRepull,
  finishFullRepull,
  noteFullRepullPage,
  readFullRepull,
  resetReasonOf,
} from './full-repull';
import { readCursor, writeCursor } from './local-apply';
import { readPullResponse } from './pull-page';

const dbs: FuselightDb[] = [];
afterEach(async () => {
  for (const db of dbs.splice(0)) {
    db.close();
    await db.delete();
  }
});
function database() {
  const db = new FuselightDb(`repull-${crypto.randomUUID()}`);
  dbs.push(db);
  return db;
}

describe('a full re-pull on the tablet', () => {
  it('moves the cursor to 0 and records the start; pages add up; the end is recorded', async () => {
    const db = database();
    await writeCursor(db, 1_000_000_123);
    expect(await readFullRepull(db)).toBeNull();
    const begun = await beginFullRepull(db, 'cursor-epoch', 1_000);
    expect(begun).toEqual({
      reason: 'cursor-epoch',
      startedAt: 1_000,
      finishedAt: null,
      received: 0,
    });
    expect(await readCursor(db)).toBe(0);
    await noteFullRepullPage(db, 7);
    await noteFullRepullPage(db, 3);
    expect((await readFullRepull(db))?.received).toBe(10);
    expect(await finishFullRepull(db, 5_000)).toEqual({
      reason: 'cursor-epoch',
      startedAt: 1_000,
      finishedAt: 5_000,
      received: 10,
    });
    // A page after the end changes nothing.
    await noteFullRepullPage(db, 4);
    expect((await readFullRepull(db))?.received).toBe(10);
  });

  it('a second reset while one is under way keeps its start and count; after the end, a new one starts', async () => {
    const db = database();
    await beginFullRepull(db, 'cursor-epoch', 1_000);
    await noteFullRepullPage(db, 5);
    expect(await beginFullRepull(db, 'horizon', 2_000)).toMatchObject({
      reason: 'cursor-epoch',
      startedAt: 1_000,
      received: 5,
    });
    await finishFullRepull(db, 3_000);
    expect(await beginFullRepull(db, 'horizon', 4_000)).toEqual({
      reason: 'horizon',
      startedAt: 4_000,
      finishedAt: null,
      received: 0,
    });
  });

  it('reads the reason of a reset, and an unknown or missing one as unknown', () => {
    expect(readPullResponse({ reset: true, reason: 'cursor-epoch' })).toEqual({
      reset: true,
      reason: 'cursor-epoch',
    });
    expect(readPullResponse({ reset: true })).toEqual({ reset: true, reason: 'unknown' });
    expect(resetReasonOf('later-reason')).toBe('unknown');
    expect(resetReasonOf('horizon')).toBe('horizon');
  });

  it('says in words what is under way and what is done', () => {
    const time = (ms: number) => `t${ms}`;
    expect(describeFullRepull(null, time)).toBeNull();
    expect(
      describeFullRepull(
        { reason: 'cursor-epoch', startedAt: 1, finishedAt: null, received: 1234 },
        time,
      ),
    ).toBe(
      `Full re-sync under way (the clinic server asked this tablet to fetch everything again to make sure nothing was missed): ${(1234).toLocaleString()} records received so far. Your edits and Outbox are kept.`,
    );
    expect(
      describeFullRepull({ reason: 'horizon', startedAt: 1, finishedAt: 9, received: 1 }, time),
    ).toBe('Full re-sync done at t9: 1 record received.');
  });
});
