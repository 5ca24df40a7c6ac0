import request from 'supertest';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  SCHEMA_VERSION,
  formatStamp,
  isPullReset,
  type PullPage,
  type PushResult,
} from '@fuselight/shared';
import type { TestApp } from '../testing/test-app';
import { createDevice, revokeDevice, signIn, type TestDevice } from '../testing/identity-factory';
import { HorizonService } from './horizon.service';
import { BEGIN_VERSIONED_WRITE_SQL } from '../records/record-version';
import { parsePushEnvelope } from './sync.service';
import {
  SITE_A,
  SITE_B,
  createSyncTestApp,
  newId,
  patientFields,
  signInAgain,
  signInAs,
  Tablet,
  tabletFor,
  type Caller,
} from './testing/sync-test-kit';

let t: TestApp;
let tabA: Tablet;
let tabB: Tablet;

beforeAll(async () => {
  t = await createSyncTestApp();
  tabA = await tabletFor(t, 'orthoptist', [SITE_A]);
  tabB = await tabletFor(t, 'orthoptist', [SITE_A]);
});
afterAll(async () => {
  await t.close();
});

async function createPatient(tablet: Tablet, overrides: Record<string, unknown> = {}) {
  const recordId = newId();
  const [result] = (
    await tablet.pushOk([
      tablet.change({ recordId, fields: patientFields(SITE_A, overrides as never) }),
    ])
  ).results;
  if (result?.status !== 'applied') throw new Error(`create answered ${JSON.stringify(result)}`);
  return { recordId, version: result.version };
}

async function signInWithDevice(person: Caller, device: TestDevice): Promise<Caller> {
  const session = await signIn(t, { user: person.person, device });
  return {
    ...person,
    deviceId: session.deviceId,
    siteIds: session.user.siteIds,
    token: session.accessToken,
    device,
  };
}

async function recordRow(recordId: string) {
  const rows = await t
    .em()
    .getConnection()
    .execute(`select * from "sync_record" where "id" = ?`, [recordId]);
  return rows[0] as
    { version: string; fields: Record<string, unknown>; deleted: boolean } | undefined;
}

async function pullFrom(
  tablet: Tablet,
  after = 0,
): Promise<{ records: PullPage['records']; cursor: number }> {
  const records: PullPage['records'] = [];
  let cursor = after;
  for (;;) {
    const page = await tablet.pullOk(cursor);
    if (isPullReset(page)) throw new Error('unexpected reset');
    records.push(...page.records);
    cursor = page.cursor;
    if (!page.more) return { records, cursor };
  }
}

async function pullAll(tablet: Tablet, after = 0): Promise<PullPage['records']> {
  return (await pullFrom(tablet, after)).records;
}

describe('POST /api/sync/push: statuses', () => {
  it('applies a new patient and answers applied with its version and no conflicts', async () => {
    const recordId = newId();
    const change = tabA.change({ recordId, fields: patientFields(SITE_A) });
    const body = await tabA.pushOk([change]);
    expect(body.results).toEqual([
      { changeId: change.changeId, status: 'applied', version: expect.any(Number), conflicts: [] },
    ]);
    expect(body.serverTime).toBe('2026-12-01T09:00:00.000Z');
    const row = await recordRow(recordId);
    expect(Number(row?.version)).toBe((body.results[0] as { version: number }).version);
    expect(row?.fields).toMatchObject({ familyName: 'Okafor', clinicNumber: 'FL-0001' });
  });

  it('answers merged when another tablet changed another field meanwhile, and keeps both edits', async () => {
    const { recordId, version } = await createPatient(tabA);
    await tabA.pushOk([
      tabA.change({ recordId, baseVersion: version, fields: { notes: 'wears glasses' } }),
    ]);
    const [result] = (
      await tabB.pushOk([
        tabB.change({ recordId, baseVersion: version, fields: { familyName: 'Oka' } }),
      ])
    ).results;
    expect(result?.status).toBe('merged');
    expect((await recordRow(recordId))?.fields).toMatchObject({
      notes: 'wears glasses',
      familyName: 'Oka',
    });
  });

  it('answers merged with nothing to resolve when two tablets set a field to the same value', async () => {
    const { recordId, version } = await createPatient(tabA);
    await tabA.pushOk([tabA.change({ recordId, baseVersion: version, fields: { notes: 'same' } })]);
    const [result] = (
      await tabB.pushOk([
        tabB.change({ recordId, baseVersion: version, fields: { notes: 'same' } }),
      ])
    ).results;
    expect(result).toMatchObject({ status: 'merged', conflicts: [] });
  });

  it('answers conflict for a concurrent different value, opens a conflict with both candidates and applies the rest', async () => {
    const { recordId, version } = await createPatient(tabA);
    await tabA.pushOk([
      tabA.change({ recordId, baseVersion: version, fields: { dateOfBirth: '2016-04-19' } }),
    ]);
    t.clock.advance(1000);
    const [result] = (
      await tabB.pushOk([
        tabB.change({
          recordId,
          baseVersion: version,
          fields: { dateOfBirth: '2016-04-29', notes: 'seen twice' },
        }),
      ])
    ).results;
    expect(result).toMatchObject({ status: 'conflict', conflicts: ['dateOfBirth'] });
    const conflicts = await t
      .em()
      .getConnection()
      .execute(
        `select "field", "status", "candidates" from "sync_conflict" where "record_id" = ?`,
        [recordId],
      );
    expect(conflicts).toHaveLength(1);
    expect(conflicts[0]).toMatchObject({ field: 'dateOfBirth', status: 'open' });
    const candidates = (conflicts[0] as { candidates: { value: string; device: string }[] })
      .candidates;
    expect(candidates.map((c) => [c.value, c.device])).toEqual([
      ['2016-04-19', tabA.caller.deviceId],
      ['2016-04-29', tabB.caller.deviceId],
    ]);
    // tabB's stamp is later, so its value is provisional; the other field was applied.
    expect((await recordRow(recordId))?.fields).toMatchObject({
      dateOfBirth: '2016-04-29',
      notes: 'seen twice',
    });
  });

  it('makes a delete racing another tablet’s edit a conflict on deleted', async () => {
    const { recordId, version } = await createPatient(tabA);
    await tabA.pushOk([
      tabA.change({ recordId, baseVersion: version, fields: { notes: 'keep me' } }),
    ]);
    t.clock.advance(1000);
    const [result] = (
      await tabB.pushOk([
        tabB.change({ recordId, baseVersion: version, fields: {}, deleted: true }),
      ])
    ).results;
    expect(result).toMatchObject({ status: 'conflict', conflicts: ['deleted'] });
    expect((await recordRow(recordId))?.deleted).toBe(true);
  });

  it('joins a further edit of a field with an open conflict to that conflict as a candidate', async () => {
    const { recordId, version } = await createPatient(tabA);
    await tabA.pushOk([
      tabA.change({ recordId, baseVersion: version, fields: { clinicNumber: 'X-1' } }),
    ]);
    await tabB.pushOk([
      tabB.change({ recordId, baseVersion: version, fields: { clinicNumber: 'X-2' } }),
    ]);
    const current = Number((await recordRow(recordId))?.version);
    const [result] = (
      await tabA.pushOk([
        tabA.change({ recordId, baseVersion: current, fields: { clinicNumber: 'X-3' } }),
      ])
    ).results;
    expect(result).toMatchObject({ status: 'conflict', conflicts: ['clinicNumber'] });
    const [conflict] = await t
      .em()
      .getConnection()
      .execute(`select "candidates" from "sync_conflict" where "record_id" = ?`, [recordId]);
    expect(
      (conflict as { candidates: { value: string }[] }).candidates.map((c) => c.value),
    ).toEqual(['X-1', 'X-2', 'X-3']);
    expect((await recordRow(recordId))?.fields.clinicNumber).toBe('X-3');
  });
});

describe('POST /api/sync/push: rejected changes', () => {
  it('rejects an unknown field, a bad value, a broken clock and a malformed stamp, and applies the good change', async () => {
    const good = tabA.change({ recordId: newId(), fields: patientFields(SITE_A) });
    const unknownField = tabA.change({
      recordId: newId(),
      fields: patientFields(SITE_A, { shoeSize: 9 }),
    });
    const badValue = tabA.change({
      recordId: newId(),
      fields: patientFields(SITE_A, { dateOfBirth: '2016-02-31' }),
    });
    const dayAhead = formatStamp({
      wallMs: t.clock.now().getTime() + 24 * 3600_000 + 1,
      counter: 0,
      deviceId: 'x',
    });
    const brokenClock = tabA.change({
      recordId: newId(),
      fields: patientFields(SITE_A),
      hlc: dayAhead,
    });
    const badStamp = tabA.change({
      recordId: newId(),
      fields: patientFields(SITE_A),
      hlc: 'yesterday',
    });
    const body = await tabA.pushOk([unknownField, badValue, good, brokenClock, badStamp]);
    const [r0, r1, r2, r3, r4] = body.results as [
      PushResult,
      PushResult,
      PushResult,
      PushResult,
      PushResult,
    ];
    expect(r0).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining('unknown field shoeSize'),
    });
    expect(r1).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining('fields.dateOfBirth'),
    });
    expect(r2).toMatchObject({ status: 'applied' });
    expect(r3).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining('24 hours ahead'),
    });
    expect(r4).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining('changes.4.hlc'),
    });
    expect(await recordRow(good.recordId as string)).toBeDefined();
    for (const change of [unknownField, badValue, brokenClock, badStamp]) {
      expect(await recordRow(change.recordId as string)).toBeUndefined();
    }
  });

  it('rejects a new record at a site outside the user’s sites, and a move of a record to such a site', async () => {
    const foreign = tabA.change({ recordId: newId(), fields: patientFields(SITE_B) });
    const { recordId, version } = await createPatient(tabA);
    const move = tabA.change({ recordId, baseVersion: version, fields: { siteId: SITE_B } });
    const [r0, r1] = (await tabA.pushOk([foreign, move])).results;
    expect(r0).toMatchObject({ status: 'rejected', error: expect.stringContaining(SITE_B) });
    expect(r1).toMatchObject({ status: 'rejected', error: expect.stringContaining(SITE_B) });
    expect(await recordRow(foreign.recordId as string)).toBeUndefined();
    expect((await recordRow(recordId))?.fields.siteId).toBe(SITE_A);
  });

  it('rejects an edit of an existing record stored at another site, whatever the change claims', async () => {
    const siteB = await tabletFor(t, 'orthoptist', [SITE_B]);
    const { recordId } = await (async () => {
      const id = newId();
      await siteB.pushOk([siteB.change({ recordId: id, fields: patientFields(SITE_B) })]);
      return { recordId: id };
    })();
    const [result] = (
      await tabA.pushOk([
        tabA.change({ recordId, baseVersion: 0, fields: { siteId: SITE_A, notes: 'x' } }),
      ])
    ).results;
    expect(result).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining(`belongs to site ${SITE_B}`),
    });
    expect((await recordRow(recordId))?.fields.notes).toBeUndefined();
  });

  it('rejects every change an admin pushes', async () => {
    const admin = await tabletFor(t, 'admin', [SITE_A]);
    const change = admin.change({ recordId: newId(), fields: patientFields(SITE_A) });
    const [result] = (await admin.pushOk([change])).results;
    expect(result).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining('admin role'),
    });
    expect(await recordRow(change.recordId as string)).toBeUndefined();
  });

  it('rejects only the change whose value the database cannot store (a NUL character)', async () => {
    const nul = tabA.change({
      recordId: newId(),
      fields: patientFields(SITE_A, { notes: 'bad \u0000 byte' }),
    });
    const good = tabA.change({ recordId: newId(), fields: patientFields(SITE_A) });
    const [r0, r1] = (await tabA.pushOk([nul, good])).results;
    expect(r0).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining('NUL character'),
    });
    expect(r1).toMatchObject({ status: 'applied' });
    expect(await recordRow(good.recordId as string)).toBeDefined();
    expect(await recordRow(nul.recordId as string)).toBeUndefined();
  });

  it('rejects a change whose field name holds a NUL character in words the log can keep, and replays it alike', async () => {
    const odd = tabA.change({
      recordId: newId(),
      fields: { ...patientFields(SITE_A), 'note\u0000s': 'x' },
    });
    const good = tabA.change({ recordId: newId(), fields: patientFields(SITE_A) });
    const [r0, r1] = (await tabA.pushOk([odd, good])).results;
    expect(r0).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining('unknown field note\\u0000s'),
    });
    expect(r0?.status === 'rejected' && r0.error).not.toContain('\u0000');
    expect(r1).toMatchObject({ status: 'applied' });
    const [again] = (await tabA.pushOk([odd])).results;
    expect(again).toEqual({ ...r0, replayed: true });
    const half = tabA.change({ recordId: newId(), fields: { siteId: SITE_A, 'x\ud800': 1 } });
    const [r2] = (await tabA.pushOk([half])).results;
    expect(r2).toMatchObject({
      status: 'rejected',
      error: expect.stringContaining('unknown field x\ufffd'),
    });
  });
});

describe('POST /api/sync/push: replays', () => {
  it('returns the first result with replayed: true and writes nothing when a changeId is sent again', async () => {
    const { recordId, version } = await createPatient(tabA);
    const edit = tabA.change({ recordId, baseVersion: version, fields: { notes: 'first' } });
    const [first] = (await tabA.pushOk([edit])).results;
    const before = await recordRow(recordId);
    const [again] = (await tabA.pushOk([edit])).results;
    expect(again).toEqual({ ...first, replayed: true });
    expect(await recordRow(recordId)).toEqual(before);
  });

  it('replays a changeId repeated within one request and applies it once', async () => {
    const { recordId, version } = await createPatient(tabA);
    const edit = tabA.change({ recordId, baseVersion: version, fields: { notes: 'once' } });
    const [r0, r1] = (await tabA.pushOk([edit, edit])).results;
    expect(r0).toMatchObject({ status: 'applied' });
    expect(r1).toEqual({ ...r0, replayed: true });
    const [{ n }] = (await t
      .em()
      .getConnection()
      .execute(`select count(*)::int as n from "sync_change" where "change_id" = ?`, [
        edit.changeId,
      ])) as [{ n: number }];
    expect(n).toBe(1);
  });

  it('replays a change that opened a dispute with the same status, version and disputed fields', async () => {
    const { recordId, version } = await createPatient(tabA);
    await tabA.pushOk([
      tabA.change({ recordId, baseVersion: version, fields: { dateOfBirth: '2016-04-19' } }),
    ]);
    t.clock.advance(1000);
    const rival = tabB.change({
      recordId,
      baseVersion: version,
      fields: { dateOfBirth: '2016-04-29', clinicNumber: 'R-77' },
    });
    const [first] = (await tabB.pushOk([rival])).results;
    expect(first).toMatchObject({ status: 'conflict', conflicts: ['dateOfBirth'] });
    const [again] = (await tabB.pushOk([rival])).results;
    expect(again).toEqual({ ...first, replayed: true });
  });

  it('stores each field’s stamp as planned: fields written by one change share its stamp, older fields keep theirs', async () => {
    const { recordId, version } = await createPatient(tabA);
    const created = (await recordRow(recordId)) as unknown as {
      stamps: Record<string, { version: number; hlc: string }>;
    };
    const createdStamps = Object.values(created.stamps);
    expect(new Set(createdStamps.map((s) => JSON.stringify(s))).size).toBe(1);
    expect(createdStamps[0]?.version).toBe(version);
    t.clock.advance(1000);
    const edit = tabB.change({ recordId, baseVersion: version, fields: { notes: 'later' } });
    const [edited] = (await tabB.pushOk([edit])).results;
    const row = (await recordRow(recordId)) as unknown as {
      stamps: Record<string, { version: number; hlc: string; by: string }>;
    };
    expect(row.stamps.notes).toMatchObject({
      version: edited?.status !== 'rejected' ? edited?.version : -1,
      hlc: edit.hlc,
    });
    for (const field of Object.keys(created.stamps))
      expect(row.stamps[field]).toEqual(created.stamps[field]);
    expect(Object.keys(row.stamps).sort()).toEqual(
      [...Object.keys(created.stamps), 'notes'].sort(),
    );
  });

  it('replays a rejected change as rejected again', async () => {
    const change = tabA.change({ recordId: newId(), fields: patientFields(SITE_B) });
    const [first] = (await tabA.pushOk([change])).results;
    const [again] = (await tabA.pushOk([change])).results;
    expect(first?.status).toBe('rejected');
    expect(again).toEqual({ ...first, replayed: true });
  });

  it('applies a change sent by two requests at the same time exactly once', async () => {
    const { recordId, version } = await createPatient(tabA);
    const edit = tabA.change({ recordId, baseVersion: version, fields: { notes: 'race' } });
    const [a, b] = await Promise.all([tabA.pushOk([edit]), tabA.pushOk([edit])]);
    const results = [a.results[0], b.results[0]];
    expect(results.filter((r) => r?.replayed === true)).toHaveLength(1);
    expect(results.map((r) => r?.status)).toEqual(['applied', 'applied']);
  });
  it('applies new records sent by three requests at once, in different orders, exactly once', async () => {
    const creates = Array.from({ length: 40 }, (_, i) =>
      tabA.change({ recordId: newId(), fields: patientFields(SITE_A, { clinicNumber: `R-${i}` }) }),
    );
    const orders = [
      creates,
      [...creates].reverse(),
      [...creates.slice(20), ...creates.slice(0, 20)],
    ];
    const answers = await Promise.all(orders.map((body) => tabA.pushOk(body)));
    for (const change of creates) {
      const results = answers.map((a) => a.results.find((r) => r.changeId === change.changeId));
      expect(results.filter((r) => r?.replayed !== true)).toHaveLength(1);
      const first = results.find((r) => r?.replayed !== true);
      if (first?.status !== 'applied') throw new Error(`${change.changeId} was not applied`);
      for (const r of results)
        expect(r).toMatchObject({ status: 'applied', version: first.version });
      expect((await recordRow(change.recordId as string))?.version).toBe(String(first.version));
    }
    const [{ audited }] = (await t
      .em()
      .getConnection()
      .execute(
        `select count(*)::int as audited from "audit_event" where "subject_id" in (select jsonb_array_elements_text(?::jsonb))`,
        [JSON.stringify(creates.map((c) => c.recordId))],
      )) as [{ audited: number }];
    expect(audited).toBe(creates.length);
  });
});

describe('POST /api/sync/push: refused requests', () => {
  it('answers 400 naming the path of a change without a usable changeId, and applies nothing', async () => {
    const good = tabA.change({ recordId: newId(), fields: patientFields(SITE_A) });
    const res = await tabA.push([good, { ...good, changeId: 'not-a-uuid' }]);
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('body.changes.1.changeId');
    expect(await recordRow(good.recordId as string)).toBeUndefined();
  });

  it('answers 400 naming the path when the envelope is not the protocol’s shape', async () => {
    const res = await tabA.push([], { protocol: 2 });
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('body.protocol');
    const noChanges = await tabA.push('x' as never as unknown[]);
    expect(noChanges.status).toBe(400);
    expect(noChanges.body.message).toContain('body.changes');
  });

  it('answers 413 for more than 500 changes', async () => {
    const changes = Array.from({ length: 501 }, () =>
      tabA.change({ recordId: newId(), fields: patientFields(SITE_A) }),
    );
    const res = await tabA.push(changes);
    expect(res.status).toBe(413);
    expect(res.body.message).toContain('at most 500');
  });

  it('answers 413 for a body over 5 MB', async () => {
    const big = 'x'.repeat(5 * 1024 * 1024 + 10);
    const res = await tabA.push([
      tabA.change({ recordId: newId(), fields: patientFields(SITE_A, { notes: big }) }),
    ]);
    expect(res.status).toBe(413);
  });

  it('answers 409 to a device with a newer schema version, and accepts the one before the current', async () => {
    const newer = await tabA.push([], { schemaVersion: SCHEMA_VERSION + 1 });
    expect(newer.status).toBe(409);
    expect(newer.body.message).toContain('server must be updated first');
    const previous = await tabA.push([], { schemaVersion: SCHEMA_VERSION - 1 });
    expect(previous.status).toBe(200);
  });

  it('answers 426 to a device two schema versions behind (426 needs a server schema version of 2 or more)', () => {
    expect(() => parsePushEnvelope({ protocol: 1, schemaVersion: 1, changes: [] }, 3)).toThrow(
      expect.objectContaining({ status: 426, message: expect.stringContaining('Update the app') }),
    );
    expect(parsePushEnvelope({ protocol: 1, schemaVersion: 2, changes: [] }, 3)).toEqual([]);
  });

  it('answers 400 naming the field to a negative schema version over HTTP: while the schema version is 1 no device can be old enough for a 426', async () => {
    // The server answers 426 to a schemaVersion below SCHEMA_VERSION − 1 (the test above, with a
    // server at 3). At SCHEMA_VERSION 1 that means below 0, which the envelope's shape refuses
    // first. When SCHEMA_VERSION goes up, this must become a push of SCHEMA_VERSION − 2 over HTTP
    // that expects 426 and the words "Update the app".
    expect(SCHEMA_VERSION, 'a 426 is now reachable over HTTP: test it here').toBe(1);
    const res = await tabA.push([], { schemaVersion: -1 });
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('body.schemaVersion: schemaVersion cannot be negative');
  });

  it('answers 401 without a token and 403 to a desk session', async () => {
    await request(t.app.getHttpServer()).post('/api/sync/push').send({}).expect(401);
    const desk = await signInAs(t, 'orthoptist', [SITE_A], { desk: true });
    await request(t.app.getHttpServer())
      .post('/api/sync/push')
      .set('authorization', `Bearer ${desk.token}`)
      .send({ protocol: 1, schemaVersion: SCHEMA_VERSION, changes: [] })
      .expect(403);
  });
});

describe('sessions behind push and pull', () => {
  it('answers 401 (erase) to a revoked tablet and 401 to an ended session, applying nothing', async () => {
    const revoked = await tabletFor(t, 'orthoptist', [SITE_A]);
    await revokeDevice(t, revoked.caller.deviceId as string);
    const change = revoked.change({ recordId: newId(), fields: patientFields(SITE_A) });
    const refused = await revoked.push([change]);
    expect(refused.status).toBe(401);
    expect(refused.body.erase).toBe(true);
    expect((await revoked.pull(0)).status).toBe(401);
    expect(await recordRow(change.recordId as string)).toBeUndefined();

    const signedOut = await tabletFor(t, 'orthoptist', [SITE_A]);
    await request(t.app.getHttpServer())
      .post('/api/auth/logout')
      .set('authorization', `Bearer ${signedOut.caller.token}`)
      .expect((res) => expect(res.status).toBeLessThan(300));
    const late = signedOut.change({ recordId: newId(), fields: patientFields(SITE_A) });
    expect((await signedOut.push([late])).status).toBe(401);
    expect(await recordRow(late.recordId as string)).toBeUndefined();
  });

  it('binds a session to the sites its tablet serves', async () => {
    const person = await signInAs(t, 'orthoptist', [SITE_A, SITE_B], { desk: true });
    const onlyA = await createDevice(t, { siteIds: [SITE_A] });
    const tablet = new Tablet(t, await signInWithDevice(person, onlyA));
    expect(tablet.caller.siteIds).toEqual([SITE_A]);
    const [result] = (
      await tablet.pushOk([tablet.change({ recordId: newId(), fields: patientFields(SITE_B) })])
    ).results;
    expect(result).toMatchObject({ status: 'rejected', error: expect.stringContaining(SITE_B) });
  });
});

describe('GET /api/sync/pull', () => {
  it('pages records in ascending version, each once a page, with all fields, stamps, more and cursor', async () => {
    const puller = await tabletFor(t, 'orthoptist', [SITE_A]);
    const start = await pullFrom(puller);
    const ids = [newId(), newId(), newId()];
    await tabA.pushOk(
      ids.map((recordId) => tabA.change({ recordId, fields: patientFields(SITE_A) })),
    );
    const [first] = ids;
    await tabA.pushOk([
      tabA.change({ recordId: first as string, baseVersion: 0, fields: { notes: 'again' } }),
    ]);
    // Test files run side by side on one cluster, and the watermark is cluster-wide: another
    // file's open transaction may hold these versions back for a moment (`more` stays true).
    // Reading to the end first waits that out; the paged reads below then see all three.
    await pullFrom(puller, start.cursor);

    const page1 = await puller.pullOk(start.cursor, 2);
    if (isPullReset(page1)) throw new Error('reset');
    expect(page1.records).toHaveLength(2);
    expect(page1.more).toBe(true);
    const page2 = await puller.pullOk(page1.cursor, 2);
    if (isPullReset(page2)) throw new Error('reset');
    expect(page2.more).toBe(false);
    const all = [...page1.records, ...page2.records];
    expect(all.map((r) => r.id).sort()).toEqual([...ids].sort());
    const versions = all.map((r) => r.version);
    expect([...versions].sort((a, b) => a - b)).toEqual(versions);
    expect(page1.cursor).toBe(page1.records.at(-1)?.version);
    const updated = all.find((r) => r.id === first);
    expect(updated?.fields).toMatchObject({ familyName: 'Okafor', notes: 'again' });
    expect(updated?.stamps.notes).toMatchObject({
      by: tabA.caller.userId,
      device: tabA.caller.deviceId,
    });
    expect(updated?.stamps.familyName?.version).toBeLessThan(updated?.stamps.notes?.version ?? 0);
  });

  it('returns only records of the user’s sites, and nothing to an admin', async () => {
    const siteB = await tabletFor(t, 'orthoptist', [SITE_B]);
    const bId = newId();
    await siteB.pushOk([siteB.change({ recordId: bId, fields: patientFields(SITE_B) })]);
    const { recordId: aId } = await createPatient(tabA);
    const seenByA = (await pullAll(tabA)).map((r) => r.id);
    expect(seenByA).toContain(aId);
    expect(seenByA).not.toContain(bId);
    const seenByB = await pullAll(siteB);
    expect(seenByB.map((r) => r.id)).toContain(bId);
    expect(seenByB.every((r) => r.fields.siteId === SITE_B)).toBe(true);
    const admin = await tabletFor(t, 'admin', [SITE_A, SITE_B]);
    expect(await admin.pullOk(0)).toEqual({ records: [], cursor: 0, more: false });
  });

  it('lists the fields with an open conflict on the pulled record', async () => {
    const { recordId, version } = await createPatient(tabA);
    await tabA.pushOk([
      tabA.change({ recordId, baseVersion: version, fields: { givenName: 'Ada' } }),
    ]);
    await tabB.pushOk([
      tabB.change({ recordId, baseVersion: version, fields: { givenName: 'Ida' } }),
    ]);
    const record = (await pullAll(tabA)).find((r) => r.id === recordId);
    expect(record?.conflicts).toEqual(['givenName']);
  });

  it('holds back a change committed while an older write of the server is still open, then delivers it', async () => {
    const puller = await tabletFor(t, 'orthoptist', [SITE_A]);
    const { cursor } = await pullFrom(puller);
    const older = new pg.Client({ connectionString: t.db.url });
    await older.connect();
    try {
      await older.query('begin');
      const { rows } = await older.query<{ base: string }>(BEGIN_VERSIONED_WRITE_SQL);
      const olderVersion = Number(rows[0]?.base) + 1;
      const olderId = newId();
      await older.query(
        `insert into "sync_record" ("id", "collection", "site_id", "version", "deleted", "fields", "stamps", "created_at", "updated_at")
         values ($1, 'patient', $2, $3, false, $4, '{}'::jsonb, now(), now())`,
        [olderId, SITE_A, olderVersion, JSON.stringify(patientFields(SITE_A))],
      );
      const { recordId, version } = await createPatient(tabA);
      expect(version).toBeGreaterThan(olderVersion);
      const held = await puller.pullOk(cursor);
      if (isPullReset(held)) throw new Error('reset');
      expect(held.records.map((r) => r.id)).not.toContain(recordId);
      // The cursor never passes the open write's version.
      expect(held.cursor).toBeGreaterThanOrEqual(cursor);
      expect(held.cursor).toBeLessThan(olderVersion);
      expect(held.more).toBe(true);
      await older.query('commit');
      const delivered = await puller.pullOk(cursor);
      if (isPullReset(delivered)) throw new Error('reset');
      expect(delivered.records.map((r) => r.id)).toEqual([olderId, recordId]);
    } finally {
      await older.end();
    }
  });

  it('answers 400 naming the query parameter for a limit out of range', async () => {
    const res = await tabA.pull(0, 0);
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('query.limit');
  });
});

describe('tombstone horizon', () => {
  it('prunes tombstones older than the horizon and answers a cursor behind it with reset', async () => {
    const horizon = t.app.get(HorizonService);
    const { recordId, version } = await createPatient(tabA);
    const [deletion] = (
      await tabA.pushOk([
        tabA.change({ recordId, baseVersion: version, fields: {}, deleted: true }),
      ])
    ).results;
    const deletedAt = (deletion as { version: number }).version;
    const stale = version; // a cursor from before the delete
    const live = await createPatient(tabA);

    const early = await horizon.pruneTombstones();
    expect(early.tombstonesRemoved).toBe(0);
    expect(isPullReset(await tabA.pullOk(stale))).toBe(false);

    t.clock.advance((t.config.tombstoneHorizonDays + 1) * 24 * 3600_000);
    const report = await horizon.pruneTombstones();
    expect(report.tombstonesRemoved).toBeGreaterThanOrEqual(1);
    expect(report.horizonVersion).toBeGreaterThanOrEqual(deletedAt);
    expect(await recordRow(recordId)).toBeUndefined();
    expect(await recordRow(live.recordId)).toBeDefined();

    // Tokens are checked against the server clock: tabA's token has long expired (401), so the
    // same person signs in again on the same tablet after 91 days.
    expect((await tabA.pull(stale)).status).toBe(401);
    const later = new Tablet(t, await signInAgain(t, tabA.caller));
    expect(later.caller.deviceId).toBe(tabA.caller.deviceId);
    expect(await later.pullOk(stale)).toEqual({ reset: true, reason: 'horizon' });
    const fresh = await later.pullOk(0);
    expect(isPullReset(fresh)).toBe(false);
    expect(isPullReset(await later.pullOk(report.horizonVersion))).toBe(false);
  });
});

describe('the audit trail of a push', () => {
  it('records one clinical event per applied change, naming the person and the tablet', async () => {
    const tablet = await tabletFor(t, 'orthoptist', [SITE_A]);
    const first = await createPatient(tablet);
    const second = await createPatient(tablet);
    const rows = await t
      .em()
      .getConnection()
      .execute<{ subject_id: string; actor_id: string; device_id: string; scope: string }[]>(
        `select subject_id, actor_id, device_id, scope from audit_event where subject_id in (?, ?)`,
        [first.recordId, second.recordId],
      );
    expect(rows).toHaveLength(2);
    for (const row of rows) {
      expect(row.scope).toBe('clinical');
      expect(row.actor_id).toBe(tablet.caller.userId);
      expect(row.device_id).toBe(tablet.caller.deviceId);
    }
  });

  it('gives each applied change of a mixed push its own kind, site, subject and detail, and none to a rejected one', async () => {
    // Kind, site and collection are bound once for the push where the changes share them; this
    // push mixes all three, with a conflict, a deletion and a rejected change among them.
    const tablet = await tabletFor(t, 'orthoptist', [SITE_A, SITE_B]);
    const other = await tabletFor(t, 'orthoptist', [SITE_A, SITE_B]);
    const edited = await createPatient(tablet);
    const disputed = await createPatient(tablet);
    const removed = await createPatient(tablet);
    await other.pushOk([
      other.change({
        recordId: disputed.recordId,
        baseVersion: disputed.version,
        fields: { clinicNumber: 'D-1' },
      }),
    ]);
    const visitId = newId();
    const changes = [
      tablet.change({ recordId: newId(), fields: patientFields(SITE_A) }),
      tablet.change({ recordId: newId(), fields: patientFields(SITE_B) }),
      tablet.change({
        recordId: visitId,
        collection: 'visit',
        fields: {
          siteId: SITE_B,
          patientId: edited.recordId,
          date: '2026-11-30',
          clinicianId: tablet.caller.userId,
          status: 'draft',
        },
      }),
      tablet.change({
        recordId: edited.recordId,
        baseVersion: edited.version,
        fields: { notes: 'seen' },
      }),
      tablet.change({
        recordId: disputed.recordId,
        baseVersion: disputed.version,
        fields: { clinicNumber: 'D-2' },
      }),
      tablet.change({
        recordId: removed.recordId,
        baseVersion: removed.version,
        fields: {},
        deleted: true,
      }),
      tablet.change({ recordId: newId(), fields: { siteId: SITE_A, shoeSize: 9 } }),
    ];
    const { results } = await tablet.pushOk(changes);
    expect(results.map((r) => r.status)).toEqual([
      'applied',
      'applied',
      'applied',
      'applied',
      'conflict',
      'applied',
      'rejected',
    ]);
    const rows = await t
      .em()
      .getConnection()
      .execute<
        {
          kind: string;
          site_id: string;
          subject_type: string;
          subject_id: string;
          actor_id: string;
          device_id: string;
          scope: string;
          detail: Record<string, unknown>;
        }[]
      >(
        `select kind, site_id, subject_type, subject_id, actor_id, device_id, scope, detail
           from audit_event
          where detail ->> 'changeId' in (select jsonb_array_elements_text(?::jsonb))
          order by seq`,
        [JSON.stringify(changes.map((c) => c.changeId))],
      );
    const expected = [
      ['record.created', SITE_A, 'patient', Object.keys(patientFields(SITE_A))],
      ['record.created', SITE_B, 'patient', Object.keys(patientFields(SITE_B))],
      ['record.created', SITE_B, 'visit', ['siteId', 'patientId', 'date', 'clinicianId', 'status']],
      ['record.changed', SITE_A, 'patient', ['notes']],
      ['record.changed', SITE_A, 'patient', ['clinicNumber']],
      ['record.deleted', SITE_A, 'patient', ['deleted']],
    ] as const;
    expect(rows).toHaveLength(expected.length);
    expected.forEach(([kind, site, collection, fields], i) => {
      const change = changes[i] as Record<string, unknown>;
      const result = results[i] as PushResult & { version: number; conflicts: string[] };
      expect(rows[i]).toEqual({
        kind,
        site_id: site,
        subject_type: collection,
        subject_id: change.recordId,
        actor_id: tablet.caller.userId,
        device_id: tablet.caller.deviceId,
        scope: 'clinical',
        detail: {
          collection,
          changeId: change.changeId,
          version: result.version,
          status: result.status,
          fields: [...fields],
          conflicts: result.conflicts,
        },
      });
    });
    expect((rows[4]?.detail as { conflicts: string[] }).conflicts).toEqual(['clinicNumber']);
  });
});

describe('POST /api/sync/push: final letters', () => {
  // Its own tablet: earlier tests move the test clock past the shared tablets' sessions.
  let tab: Tablet;
  beforeAll(async () => {
    tab = await tabletFor(t, 'orthoptist', [SITE_A]);
  });

  async function finalLetter(tablet: Tablet) {
    const recordId = newId();
    const [result] = (
      await tablet.pushOk([
        tablet.change({
          recordId,
          collection: 'letter',
          fields: {
            siteId: SITE_A,
            visitId: newId(),
            patientId: newId(),
            kind: 'referrer',
            status: 'final',
            opening: 'Dear Dr Fairweather,',
            finalisedBy: tablet.caller.person.id,
            finalisedAt: '2026-12-01T15:20:00.000Z',
          },
        }),
      ])
    ).results;
    if (result?.status !== 'applied') throw new Error(`letter answered ${JSON.stringify(result)}`);
    return { recordId, version: result.version };
  }

  it('rejects an edit of a final letter in words a person can act on, before the database, and applies the rest', async () => {
    const { recordId, version } = await finalLetter(tab);
    const edit = tab.change({
      recordId,
      collection: 'letter',
      baseVersion: version,
      fields: { opening: 'Changed after finalising' },
    });
    const good = tab.change({ recordId: newId(), fields: patientFields(SITE_A) });
    const [r0, r1] = (await tab.pushOk([edit, good])).results;
    expect(r0).toEqual({
      changeId: edit.changeId,
      status: 'rejected',
      error:
        'changes.0: fields.opening: opening: this letter is final and can no longer be changed; write a new letter instead',
    });
    expect(r1).toMatchObject({ status: 'applied' });
    expect((await recordRow(recordId))?.fields.opening).toBe('Dear Dr Fairweather,');
    expect(await recordRow(good.recordId as string)).toBeDefined();
  });

  it('rejects an edit after a finalisation earlier in the same push, and a deletion of a final letter', async () => {
    const recordId = newId();
    const draft = tab.change({
      recordId,
      collection: 'letter',
      fields: {
        siteId: SITE_A,
        visitId: newId(),
        patientId: newId(),
        kind: 'handout',
        status: 'draft',
      },
    });
    const finalise = tab.change({
      recordId,
      collection: 'letter',
      fields: {
        status: 'final',
        finalisedBy: tab.caller.person.id,
        finalisedAt: '2026-12-01T15:20:00.000Z',
      },
    });
    const late = tab.change({ recordId, collection: 'letter', fields: { planText: 'Late' } });
    const remove = tab.change({ recordId, collection: 'letter', fields: {}, deleted: true });
    const [r0, r1, r2, r3] = (await tab.pushOk([draft, finalise, late, remove])).results;
    expect(r0).toMatchObject({ status: 'applied' });
    expect(r1).toMatchObject({ status: 'applied' });
    expect(r2).toMatchObject({
      status: 'rejected',
      error: expect.stringMatching(/^changes\.2: fields\.planText: .*this letter is final/),
    });
    expect(r3).toMatchObject({
      status: 'rejected',
      error:
        'changes.3: deleted: this letter is final and cannot be deleted; it stays on the record',
    });
    const row = await recordRow(recordId);
    expect(row).toMatchObject({ deleted: false, fields: { status: 'final' } });
    expect(row?.fields.planText).toBeUndefined();
  });

  it('accepts a send request on a final letter, and a field sent again with the value it has', async () => {
    const { recordId, version } = await finalLetter(tab);
    const send = tab.change({
      recordId,
      collection: 'letter',
      baseVersion: version,
      fields: {
        deliveryState: 'queued',
        sendRequestedAt: '2026-12-01T15:30:00.000Z',
        copyToPatient: true,
        status: 'final',
        opening: 'Dear Dr Fairweather,',
      },
    });
    const [result] = (await tab.pushOk([send])).results;
    expect(result?.status).not.toBe('rejected');
    expect((await recordRow(recordId))?.fields).toMatchObject({
      deliveryState: 'queued',
      sendRequestedAt: '2026-12-01T15:30:00.000Z',
      copyToPatient: true,
      opening: 'Dear Dr Fairweather,',
    });
  });

  it('rejects a tablet’s write of the fields that belong to the clinic server’s mailer', async () => {
    const { recordId, version } = await finalLetter(tab);
    const forged = tab.change({
      recordId,
      collection: 'letter',
      baseVersion: version,
      fields: { sentAt: '2026-12-01T15:40:00.000Z' },
    });
    const [result] = (await tab.pushOk([forged])).results;
    expect(result).toMatchObject({
      status: 'rejected',
      error:
        "changes.0: fields.sentAt: sentAt is written by the clinic server's mailer, not by a tablet",
    });
    expect((await recordRow(recordId))?.fields.sentAt).toBeUndefined();
  });

  it('rejects in words a null for a paragraph a final letter never had, which would still change it', async () => {
    const { recordId, version } = await finalLetter(tab);
    const cleared = tab.change({
      recordId,
      collection: 'letter',
      baseVersion: version,
      fields: { closing: null },
    });
    const [result] = (await tab.pushOk([cleared])).results;
    expect(result).toMatchObject({
      status: 'rejected',
      error: expect.stringMatching(/^changes\.0: fields\.closing: .*this letter is final/),
    });
    expect(Object.hasOwn((await recordRow(recordId))!.fields, 'closing')).toBe(false);
  });

  it('keeps the database trigger as the last line of defence for a write that skips the push', async () => {
    const { recordId } = await finalLetter(tab);
    await expect(
      t
        .em()
        .getConnection()
        .execute(
          `update "sync_record" set "fields" = "fields" || '{"opening":"Bypassed"}'::jsonb where "id" = ?`,
          [recordId],
        ),
    ).rejects.toMatchObject({ code: '22023' });
    expect((await recordRow(recordId))?.fields.opening).toBe('Dear Dr Fairweather,');
  });
});
