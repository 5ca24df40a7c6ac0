import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isPullReset, type ConflictItem, type ConflictListResponse } from '@fuselight/shared';
import type { TestApp } from '../testing/test-app';
import {
  SITE_A,
  SITE_B,
  Tablet,
  createSyncTestApp,
  newId,
  patientFields,
  signInAs,
  tabletFor,
  type Caller,
} from '../sync/testing/sync-test-kit';

let t: TestApp;
let tabA: Tablet;
let tabB: Tablet;
let supervisor: Caller;

beforeAll(async () => {
  t = await createSyncTestApp();
  tabA = await tabletFor(t, 'orthoptist', [SITE_A, SITE_B]);
  tabB = await tabletFor(t, 'orthoptist', [SITE_A, SITE_B]);
  supervisor = await signInAs(t, 'supervisor', [SITE_A], { desk: true });
});
afterAll(async () => {
  await t.close();
});

/** Two tablets set dateOfBirth of one patient to different values: one open conflict. */
async function openConflict(siteId = SITE_A): Promise<{ recordId: string }> {
  const recordId = newId();
  const [created] = (await tabA.pushOk([tabA.change({ recordId, fields: patientFields(siteId) })]))
    .results;
  const version = (created as { version: number }).version;
  await tabA.pushOk([
    tabA.change({ recordId, baseVersion: version, fields: { dateOfBirth: '2016-04-19' } }),
  ]);
  t.clock.advance(1000);
  const [result] = (
    await tabB.pushOk([
      tabB.change({ recordId, baseVersion: version, fields: { dateOfBirth: '2016-04-29' } }),
    ])
  ).results;
  expect(result?.status).toBe('conflict');
  return { recordId };
}

function list(caller: Caller, query: Record<string, string> = {}) {
  return request(t.app.getHttpServer())
    .get('/api/conflicts')
    .query(query)
    .set('authorization', `Bearer ${caller.token}`);
}

function resolve(caller: Caller, id: string, body: unknown) {
  return request(t.app.getHttpServer())
    .post(`/api/conflicts/${id}/resolve`)
    .set('authorization', `Bearer ${caller.token}`)
    .send(body as object);
}

async function conflictOf(recordId: string): Promise<ConflictItem> {
  const res = await list(supervisor, { recordId });
  expect(res.status).toBe(200);
  const [item] = (res.body as ConflictListResponse).items;
  if (!item) throw new Error('no conflict');
  return item;
}

describe('GET /api/conflicts', () => {
  it('lists an open conflict with its provisional value and every candidate', async () => {
    const { recordId } = await openConflict();
    const item = await conflictOf(recordId);
    expect(item).toMatchObject({
      collection: 'patient',
      recordId,
      field: 'dateOfBirth',
      status: 'open',
      provisional: '2016-04-29',
    });
    expect(item.candidates.map((c) => [c.value, c.device])).toEqual([
      ['2016-04-19', tabA.caller.deviceId],
      ['2016-04-29', tabB.caller.deviceId],
    ]);
    expect(item.candidates[0]).toMatchObject({
      by: tabA.caller.userId,
      version: expect.any(Number),
      hlc: expect.any(String),
    });
  });

  it('shows a supervisor only the conflicts of their sites', async () => {
    const { recordId } = await openConflict(SITE_B);
    const res = await list(supervisor, { recordId });
    expect(res.body).toEqual({ items: [], next: null });
    const siteB = await signInAs(t, 'supervisor', [SITE_B], { desk: true });
    expect(((await list(siteB, { recordId })).body as ConflictListResponse).items).toHaveLength(1);
  });

  it('pages with an opaque cursor and filters by status', async () => {
    for (let i = 0; i < 3; i += 1) await openConflict();
    const seen: string[] = [];
    let cursor: string | null = null;
    let pages = 0;
    do {
      const res = await list(supervisor, { status: 'open', ...(cursor ? { cursor } : {}) });
      const body = res.body as ConflictListResponse;
      seen.push(...body.items.map((i) => i.id));
      cursor = body.next;
      pages += 1;
    } while (cursor && pages < 20);
    expect(new Set(seen).size).toBe(seen.length);
    expect(seen.length).toBeGreaterThanOrEqual(3);
    const resolved = (await list(supervisor, { status: 'resolved' })).body as ConflictListResponse;
    expect(resolved.items.every((i) => i.status === 'resolved')).toBe(true);
    expect((await list(supervisor, { cursor: 'garbage' })).status).toBe(400);
  });

  it('refuses a clinician with 403', async () => {
    const clinician = await signInAs(t, 'orthoptist', [SITE_A], { desk: true });
    expect((await list(clinician)).status).toBe(403);
  });
});

describe('POST /api/conflicts/:id/resolve', () => {
  it('writes the chosen candidate as a new version stamped by the supervisor, which reaches every pull', async () => {
    const { recordId } = await openConflict();
    const item = await conflictOf(recordId);
    const before = await tabA.pullOk(0);
    if (isPullReset(before)) throw new Error('reset');
    const beforeVersion = before.records.find((r) => r.id === recordId)?.version ?? 0;

    const res = await resolve(supervisor, item.id, {
      value: '2016-04-19',
      note: 'checked the birth certificate',
    });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      status: 'resolved',
      resolvedBy: supervisor.userId,
      note: 'checked the birth certificate',
    });

    for (const tablet of [tabA, tabB]) {
      let cursor = 0;
      let record;
      for (;;) {
        const page = await tablet.pullOk(cursor);
        if (isPullReset(page)) throw new Error('reset');
        record = page.records.find((r) => r.id === recordId) ?? record;
        cursor = page.cursor;
        if (!page.more) break;
      }
      expect(record?.fields.dateOfBirth).toBe('2016-04-19');
      expect(record?.version).toBeGreaterThan(beforeVersion);
      expect(record?.stamps.dateOfBirth).toMatchObject({ by: supervisor.userId, device: 'server' });
      expect(record?.conflicts).toEqual([]);
      const stampHlc = record?.stamps.dateOfBirth?.hlc ?? '';
      for (const candidate of item.candidates) expect(stampHlc > candidate.hlc).toBe(true);
    }
  });

  it('stamps a resolution made on a tablet with that tablet’s device id, and accepts a new value', async () => {
    const { recordId } = await openConflict();
    const item = await conflictOf(recordId);
    const onTablet = await signInAs(t, 'supervisor', [SITE_A]);
    const res = await resolve(onTablet, item.id, {
      value: '2016-04-09',
      note: 'neither was right',
    });
    expect(res.status).toBe(200);
    const rows = await t
      .em()
      .getConnection()
      .execute(`select "fields", "stamps" from "sync_record" where "id" = ?`, [recordId]);
    const row = rows[0] as {
      fields: { dateOfBirth: string };
      stamps: { dateOfBirth: { device: string } };
    };
    expect(row.fields.dateOfBirth).toBe('2016-04-09');
    expect(row.stamps.dateOfBirth.device).toBe(onTablet.deviceId);
  });

  it('answers 409 to a second resolution and keeps the first', async () => {
    const { recordId } = await openConflict();
    const item = await conflictOf(recordId);
    expect(
      (await resolve(supervisor, item.id, { value: '2016-04-19', note: 'first' })).status,
    ).toBe(200);
    const again = await resolve(supervisor, item.id, { value: '2016-04-29', note: 'second' });
    expect(again.status).toBe(409);
    expect((await conflictOf(recordId)).provisional).toBe('2016-04-19');
  });

  it('refuses a value the field’s schema rejects with 400 and leaves the conflict open', async () => {
    const { recordId } = await openConflict();
    const item = await conflictOf(recordId);
    const res = await resolve(supervisor, item.id, { value: '2016-13-45', note: 'typo' });
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('body.value');
    expect((await resolve(supervisor, item.id, { value: '2016-04-19' })).status).toBe(400);
    expect((await conflictOf(recordId)).status).toBe('open');
  });

  it('refuses a clinician (403) and a supervisor of another site (403), changing nothing', async () => {
    const { recordId } = await openConflict();
    const item = await conflictOf(recordId);
    const clinician = await signInAs(t, 'orthoptist', [SITE_A], { desk: true });
    expect((await resolve(clinician, item.id, { value: '2016-04-19', note: 'x' })).status).toBe(
      403,
    );
    const elsewhere = await signInAs(t, 'supervisor', [SITE_B], { desk: true });
    expect((await resolve(elsewhere, item.id, { value: '2016-04-19', note: 'x' })).status).toBe(
      403,
    );
    expect((await conflictOf(recordId)).status).toBe('open');
  });

  it('answers 404 for an unknown conflict and 400 for an id that is not a UUID', async () => {
    expect((await resolve(supervisor, newId(), { value: 1, note: 'x' })).status).toBe(404);
    const bad = await resolve(supervisor, 'nope', { value: 1, note: 'x' });
    expect(bad.status).toBe(400);
    expect(bad.body.message).toContain('params.id');
  });

  it('resolves a delete racing an edit by keeping the record', async () => {
    const recordId = newId();
    const [created] = (
      await tabA.pushOk([tabA.change({ recordId, fields: patientFields(SITE_A) })])
    ).results;
    const version = (created as { version: number }).version;
    await tabA.pushOk([
      tabA.change({ recordId, baseVersion: version, fields: { notes: 'still treated' } }),
    ]);
    t.clock.advance(1000);
    await tabB.pushOk([tabB.change({ recordId, baseVersion: version, fields: {}, deleted: true })]);
    const item = await conflictOf(recordId);
    expect(item).toMatchObject({ field: 'deleted', provisional: true });
    expect((await resolve(supervisor, item.id, { value: 'no', note: 'x' })).status).toBe(400);
    expect(
      (await resolve(supervisor, item.id, { value: false, note: 'patient still seen' })).status,
    ).toBe(200);
    const rows = await t
      .em()
      .getConnection()
      .execute(`select "deleted" from "sync_record" where "id" = ?`, [recordId]);
    expect((rows[0] as { deleted: boolean }).deleted).toBe(false);
  });
});
