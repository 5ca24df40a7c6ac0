// Pull pages across a change in the versions' digit count. Versions are numbers: a first sync
// must hold exactly the server's records for its scope, each once, in ascending numeric order,
// whatever the page size, also when earlier versions have fewer digits than later ones (text
// order would put 1000001 before 743001 and skip records behind the cursor).
import { isPullReset, type PulledRecord } from '@fuselight/shared';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CURSOR_EPOCH } from '../records/record-version';
import type { TestApp } from '../testing/test-app';
import { startVersionsBelowPowerOfTen, versionLengths } from '../testing/version-boundary';
import {
  SITE_A,
  SITE_B,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
  type Tablet,
} from './testing/sync-test-kit';

let t: TestApp;
let writer: Tablet;
let boundary = 0;

interface Held {
  id: string;
  version: number;
}

/** The server's records for a site, read straight from the table (not through pull). */
async function storedAt(siteId: string): Promise<Held[]> {
  const rows = await t
    .em()
    .getConnection()
    .execute<{ id: string; v: string }[]>(
      `select r."id", r."version"::text as "v" from "sync_record" r where r."site_id" = ?`,
      [siteId],
    );
  return rows
    .map((r) => ({ id: r.id, version: Number(r.v) }))
    .sort((a, b) => a.version - b.version);
}

/** Every page from 0 with `limit`, as a tablet's first sync walks them. */
async function firstSync(
  tablet: Tablet,
  limit: number,
): Promise<{ records: PulledRecord[]; pages: number }> {
  const records: PulledRecord[] = [];
  let cursor = 0;
  let pages = 0;
  for (;;) {
    const page = await tablet.pullOk(cursor, limit);
    if (isPullReset(page)) throw new Error('a first sync was told to start over');
    pages += 1;
    expect(page.records.length).toBeLessThanOrEqual(limit);
    for (const record of page.records) expect(record.version).toBeGreaterThan(cursor);
    if (page.records.length > 0) expect(page.cursor).toBe(page.records.at(-1)!.version);
    records.push(...page.records);
    cursor = page.cursor;
    if (!page.more) return { records, pages };
    if (pages > 5_000) throw new Error('the first sync does not end');
  }
}

beforeAll(async () => {
  t = await createSyncTestApp();
  writer = await tabletFor(t, 'orthoptist', [SITE_A, SITE_B]);
  const ids: string[] = [];
  // Records of both sites at the database's first, shorter versions…
  for (let batch = 0; batch < 6; batch += 1) {
    const batchIds = Array.from({ length: 9 }, () => newId());
    ids.push(...batchIds);
    await writer.pushOk(
      batchIds.map((recordId, i) =>
        writer.change({ recordId, fields: patientFields(i % 3 === 0 ? SITE_B : SITE_A) }),
      ),
    );
  }
  // …then versions just below a power of ten, crossing it a few pushes later…
  ({ boundary } = await startVersionsBelowPowerOfTen(t.db.url, { transactionsBefore: 4 }));
  for (let batch = 0; batch < 12; batch += 1) {
    const batchIds = Array.from({ length: 5 }, () => newId());
    ids.push(...batchIds);
    await writer.pushOk(
      batchIds.map((recordId, i) =>
        writer.change({ recordId, fields: patientFields(i === 0 ? SITE_B : SITE_A) }),
      ),
    );
  }
  // …and some early records edited after it, so they move behind the later ones.
  const stored = new Map((await storedAt(SITE_A)).map((r) => [r.id, r.version]));
  const early = ids.filter((id) => stored.has(id)).slice(0, 8);
  await writer.pushOk(
    early.map((recordId) =>
      writer.change({
        recordId,
        baseVersion: stored.get(recordId),
        fields: { givenName: 'Edited after the boundary' },
      }),
    ),
  );
}, 60_000);

afterAll(async () => {
  await t.close();
});

describe('pull pages across a change in digit count', () => {
  it('the arranged data crosses the boundary (versions of different lengths at one site)', async () => {
    const versions = (await storedAt(SITE_A)).map((r) => r.version);
    expect(versionLengths(versions).length).toBeGreaterThanOrEqual(2);
    expect(versions.some((v) => v < boundary)).toBe(true);
    expect(versions.some((v) => v >= boundary)).toBe(true);
  });

  it.each([1, 2, 7, 50])(
    'a first sync with pages of %i holds exactly the site’s records, each once, in ascending numeric order',
    async (limit) => {
      const reader = await tabletFor(t, 'orthoptist', [SITE_A]);
      const { records, pages } = await firstSync(reader, limit);
      const versions = records.map((r) => r.version);
      expect(versions).toEqual([...versions].sort((a, b) => a - b));
      expect(new Set(versions).size).toBe(versions.length);
      const ids = records.map((r) => r.id);
      expect(new Set(ids).size).toBe(ids.length);
      expect(records.map((r) => ({ id: r.id, version: r.version }))).toEqual(
        await storedAt(SITE_A),
      );
      expect(pages).toBeGreaterThanOrEqual(Math.ceil(records.length / limit));
    },
  );

  it('a tablet of the other site gets only that site’s records, in order, across the boundary', async () => {
    const reader = await tabletFor(t, 'orthoptist', [SITE_B]);
    const { records } = await firstSync(reader, 3);
    expect(records.map((r) => ({ id: r.id, version: r.version }))).toEqual(await storedAt(SITE_B));
    expect(versionLengths(records.map((r) => r.version)).length).toBeGreaterThanOrEqual(2);
  });

  it('says there is more exactly while a page stops short of the last version', async () => {
    const reader = await tabletFor(t, 'orthoptist', [SITE_A]);
    const all = await storedAt(SITE_A);
    const lastShort = all.filter((r) => r.version < boundary).at(-1)!;
    const page = await reader.pullOk(lastShort.version, 1);
    if (isPullReset(page)) throw new Error('unexpected reset');
    expect(page.records.map((r) => r.id)).toEqual([all[all.indexOf(lastShort) + 1]!.id]);
    expect(page.more).toBe(true);
    const end = await reader.pullOk(all.at(-1)!.version, 50);
    if (isPullReset(end)) throw new Error('unexpected reset');
    expect(end).toMatchObject({ records: [], more: false, cursor: all.at(-1)!.version });
  });
});

describe('tablets whose cursor came from text-ordered pages', () => {
  async function setEpoch(deviceId: string, epoch: number) {
    await t
      .em()
      .getConnection()
      .execute(`update "device" set "pull_epoch" = ? where "id" = ?`, [epoch, deviceId]);
  }
  async function epochOf(deviceId: string): Promise<number> {
    const [row] = await t
      .em()
      .getConnection()
      .execute<{ pull_epoch: number }[]>(`select "pull_epoch" from "device" where "id" = ?`, [
        deviceId,
      ]);
    return row!.pull_epoch;
  }

  it('are told once to pull from the start, and then page on as usual, also when the re-pull is interrupted', async () => {
    const tablet = await tabletFor(t, 'orthoptist', [SITE_A]);
    const deviceId = tablet.caller.deviceId!;
    // As a tablet enrolled before the fix: its cursors are of epoch 1.
    await setEpoch(deviceId, 1);
    const all = await storedAt(SITE_A);
    const oldCursor = all[Math.floor(all.length / 2)]!.version;
    expect(await tablet.pullOk(oldCursor, 50)).toEqual({ reset: true, reason: 'cursor-epoch' });
    expect(await tablet.pullOk(oldCursor, 50)).toEqual({ reset: true, reason: 'cursor-epoch' });
    expect(await epochOf(deviceId)).toBe(1);

    // The re-pull starts: the device is now of the current epoch…
    const first = await tablet.pullOk(0, 7);
    if (isPullReset(first)) throw new Error('a pull from 0 was told to start over');
    expect(await epochOf(deviceId)).toBe(CURSOR_EPOCH);
    // …so the interrupted re-pull resumes from its own cursor without another reset.
    const received = [...first.records];
    let cursor = first.cursor;
    for (;;) {
      const page = await tablet.pullOk(cursor, 7);
      if (isPullReset(page)) throw new Error('told to start over again');
      received.push(...page.records);
      cursor = page.cursor;
      if (!page.more) break;
    }
    expect(received.map((r) => ({ id: r.id, version: r.version }))).toEqual(all);
  });

  it('a tablet already of the current epoch is never reset, and a new tablet starts in it', async () => {
    const tablet = await tabletFor(t, 'orthoptist', [SITE_A]);
    const deviceId = tablet.caller.deviceId!;
    expect(await epochOf(deviceId)).toBe(CURSOR_EPOCH);
    await tablet.pullOk(0, 1);
    expect(await epochOf(deviceId)).toBe(CURSOR_EPOCH);
    const all = await storedAt(SITE_A);
    const page = await tablet.pullOk(all[3]!.version, 2);
    expect(isPullReset(page)).toBe(false);
  });
});
