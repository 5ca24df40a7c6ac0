// The Review desk against the real server and PostgreSQL: disputes made by two real tablets
// through push, resolved through the desk; countersigning and returns reaching the author's pull;
// record histories and their CSV; a dispute on a Signed visit becoming an Addendum.
import request from 'supertest';
import { v7 as uuidv7 } from 'uuid';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import {
  PROTOCOL_VERSION,
  SCHEMA_VERSION,
  type JsonValue,
  type PullPage,
  type PushResponse,
} from '@fuselight/shared';
import { sqlRows } from '../database/sql';
import { AddendumPublisher } from '../disputes/addendum-publisher.service';
import { AddendumStore } from '../disputes/addendum-store';
import {
  bearer,
  createDevice,
  createSite,
  createUser,
  signIn,
  type TestSession,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';

interface TabletSession extends TestSession {
  deviceId: string;
  counter: number;
}

let t: TestApp;
let siteA: string;
let siteB: string;
let studentTablet: TabletSession;
let colleagueTablet: TabletSession;
let studentId: string;
let supervisorA: TestSession;
let supervisorAId: string;
let supervisorB: TestSession;
let orthoptistDesk: TestSession;

const http = () => request(t.app.getHttpServer());

function stamp(tablet: TabletSession): string {
  tablet.counter += 1;
  return `${String(t.clock.now().getTime()).padStart(15, '0')}-${String(tablet.counter).padStart(5, '0')}-${tablet.deviceId}`;
}

async function push(
  tablet: TabletSession,
  collection: string,
  recordId: string,
  fields: Record<string, JsonValue>,
  baseVersion: number,
): Promise<PushResponse['results'][number]> {
  const res = await http()
    .post('/api/sync/push')
    .set(bearer(tablet.accessToken))
    .send({
      protocol: PROTOCOL_VERSION,
      schemaVersion: SCHEMA_VERSION,
      changes: [
        { changeId: uuidv7(), collection, recordId, baseVersion, hlc: stamp(tablet), fields },
      ],
    });
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  const [result] = (res.body as PushResponse).results;
  if (!result || result.status === 'rejected')
    throw new Error(`push rejected: ${JSON.stringify(result)}`);
  return result;
}

async function pullRecord(
  tablet: TabletSession,
  recordId: string,
): Promise<PullPage['records'][number]> {
  let after = 0;
  let found: PullPage['records'][number] | undefined;
  for (;;) {
    const res = await http().get('/api/sync/pull').query({ after }).set(bearer(tablet.accessToken));
    expect(res.status).toBe(200);
    const page = res.body as PullPage;
    found = page.records.find((r) => r.id === recordId) ?? found;
    after = page.cursor;
    if (!page.more) break;
  }
  if (!found) throw new Error(`record ${recordId} is not in the pull`);
  return found;
}

async function pullCollection(
  tablet: TabletSession,
  collection: string,
): Promise<PullPage['records']> {
  let after = 0;
  const found: PullPage['records'] = [];
  for (;;) {
    const res = await http().get('/api/sync/pull').query({ after }).set(bearer(tablet.accessToken));
    expect(res.status).toBe(200);
    const page = res.body as PullPage;
    found.push(...page.records.filter((r) => r.collection === collection));
    after = page.cursor;
    if (!page.more) break;
  }
  return found;
}

/** A patient, a visit by the student and an angles section, made on the student's tablet. */
async function chartVisit(): Promise<{
  patientId: string;
  visitId: string;
  anglesId: string;
  anglesVersion: number;
}> {
  const patientId = uuidv7();
  const visitId = uuidv7();
  const anglesId = uuidv7();
  await push(
    studentTablet,
    'patient',
    patientId,
    {
      siteId: siteA,
      givenName: 'Mira',
      familyName: 'Tenby',
      dateOfBirth: '2017-03-14',
      clinicNumber: `HS-${patientId.slice(-4)}`,
      sex: 'female',
    },
    0,
  );
  await push(
    studentTablet,
    'visit',
    visitId,
    {
      siteId: siteA,
      patientId,
      date: '2026-12-01',
      clinicianId: studentId,
      status: 'draft',
      reason: 'Review of intermittent exotropia',
    },
    0,
  );
  const angles = await push(
    studentTablet,
    'amblyoscopeAngles',
    anglesId,
    { siteId: siteA, visitId, patientId, objectiveHorizontalDeg: 12, subjectiveHorizontalDeg: 4 },
    0,
  );
  if (angles.status === 'rejected') throw new Error('angles rejected');
  return { patientId, visitId, anglesId, anglesVersion: angles.version };
}

async function openAngleDispute(
  anglesId: string,
  baseVersion: number,
  values: [number, number],
): Promise<string> {
  t.clock.advance(5_000);
  await push(
    studentTablet,
    'amblyoscopeAngles',
    anglesId,
    { objectiveHorizontalDeg: values[0] },
    baseVersion,
  );
  t.clock.advance(5_000);
  const second = await push(
    colleagueTablet,
    'amblyoscopeAngles',
    anglesId,
    { objectiveHorizontalDeg: values[1] },
    baseVersion,
  );
  expect(second.status).toBe('conflict');
  const res = await http()
    .get('/api/conflicts')
    .query({ status: 'open', recordId: anglesId })
    .set(bearer(supervisorA.accessToken));
  expect(res.status).toBe(200);
  const [conflict] = res.body.items as { id: string }[];
  if (!conflict) throw new Error('no conflict opened');
  return conflict.id;
}

async function signVisit(visitId: string): Promise<void> {
  const visit = await pullRecord(studentTablet, visitId);
  t.clock.advance(5_000);
  await push(
    studentTablet,
    'visit',
    visitId,
    {
      status: 'signed',
      signedBy: studentId,
      signedAt: t.clock.now().toISOString(),
      needsCountersign: true,
    },
    visit.version,
  );
}

async function auditKinds(subjectId: string): Promise<string[]> {
  const rows = await sqlRows<{ kind: string }>(
    t.em(),
    `select "kind" from "audit_event" where "subject_id" = ? order by "seq"`,
    [subjectId],
  );
  return rows.map((r) => r.kind);
}

beforeAll(async () => {
  t = await createTestApp();
  siteA = (await createSite(t, { name: 'Harbour Street Clinic', timeZone: 'Pacific/Auckland' })).id;
  siteB = (await createSite(t, { name: 'Hillside Outreach' })).id;
  const student = await createUser(t, {
    role: 'orthoptist',
    siteIds: [siteA],
    needsCountersign: true,
    name: 'Ada Quill',
  });
  studentId = student.id;
  const colleague = await createUser(t, {
    role: 'orthoptist',
    siteIds: [siteA],
    name: 'Bram Osei',
  });
  const tabletOne = await createDevice(t, { siteIds: [siteA], label: 'Room 2 tablet' });
  const tabletTwo = await createDevice(t, { siteIds: [siteA], label: 'Room 3 tablet' });
  studentTablet = {
    ...(await signIn(t, { user: student, device: tabletOne })),
    deviceId: tabletOne.deviceId,
    counter: 0,
  };
  colleagueTablet = {
    ...(await signIn(t, { user: colleague, device: tabletTwo })),
    deviceId: tabletTwo.deviceId,
    counter: 0,
  };
  const supA = await createUser(t, { role: 'supervisor', siteIds: [siteA], name: 'Corin Hale' });
  supervisorAId = supA.id;
  supervisorA = await signIn(t, { user: supA });
  supervisorB = await signIn(t, {
    user: await createUser(t, { role: 'supervisor', siteIds: [siteB] }),
  });
  orthoptistDesk = await signIn(t, { user: colleague });
});

afterAll(async () => {
  await t?.close();
});

describe('Disputes on the Review desk', () => {
  let ids: Awaited<ReturnType<typeof chartVisit>>;
  let conflictId: string;

  beforeAll(async () => {
    ids = await chartVisit();
    conflictId = await openAngleDispute(ids.anglesId, ids.anglesVersion, [14, -8]);
  });

  it('lists the dispute with patient, site, candidates named by person and tablet, and the provisional one marked', async () => {
    const res = await http()
      .get('/api/review/disputes')
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    const row = (res.body.items as Record<string, unknown>[]).find(
      (item) => item.id === conflictId,
    ) as Record<string, unknown> & { candidates: unknown };
    expect(row).toBeDefined();
    expect(row).toMatchObject({
      collection: 'amblyoscopeAngles',
      field: 'objectiveHorizontalDeg',
      patientName: 'Mira Tenby',
      siteName: 'Harbour Street Clinic',
      timeZone: 'Pacific/Auckland',
      visitId: ids.visitId,
      visitDate: '2026-12-01',
      signedVisit: false,
    });
    const candidates = row.candidates as {
      value: number;
      by: { name: string };
      device: { label: string };
      provisional: boolean;
      enteredAt: string;
    }[];
    expect(candidates.map((c) => [c.value, c.by.name, c.device.label])).toEqual([
      [14, 'Ada Quill', 'Room 2 tablet'],
      [-8, 'Bram Osei', 'Room 3 tablet'],
    ]);
    // The later stamp (the colleague's) is provisional.
    expect(candidates.map((c) => c.provisional)).toEqual([false, true]);
    expect(candidates[1]!.enteredAt).toBe(t.clock.now().toISOString());
    expect(res.body.openTotal).toBeGreaterThanOrEqual(1);
  });

  it('filters by patient and section, and pages', async () => {
    const none = await http()
      .get('/api/review/disputes')
      .query({ patient: 'nobody' })
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    expect(none.body.total).toBe(0);
    const bySection = await http()
      .get('/api/review/disputes')
      .query({ section: 'amblyoscopeAngles', patient: 'tenby', pageSize: 1 })
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    expect(bySection.body.items).toHaveLength(1);
    expect(bySection.body.pageSize).toBe(1);
    const bad = await http()
      .get('/api/review/disputes')
      .query({ section: 'teeth' })
      .set(bearer(supervisorA.accessToken));
    expect(bad.status).toBe(400);
    expect(bad.body.message).toContain('section');
  });

  it('shows the record around the dispute for context', async () => {
    const res = await http()
      .get(`/api/review/disputes/${conflictId}`)
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    expect(res.body.record.fields).toMatchObject({
      subjectiveHorizontalDeg: 4,
      objectiveHorizontalDeg: -8,
    });
  });

  it('is for supervisors of the dispute’s site only', async () => {
    await http().get('/api/review/disputes').set(bearer(orthoptistDesk.accessToken)).expect(403);
    await http().get('/api/review/disputes').expect(401);
    const other = await http()
      .get('/api/review/disputes')
      .set(bearer(supervisorB.accessToken))
      .expect(200);
    expect(other.body.items).toEqual([]);
    await http()
      .get(`/api/review/disputes/${conflictId}`)
      .set(bearer(supervisorB.accessToken))
      .expect(403);
    await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(supervisorB.accessToken))
      .send({ value: 10, note: 'not mine to decide' })
      .expect(403);
    await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(orthoptistDesk.accessToken))
      .send({ value: 10, note: 'not a supervisor' })
      .expect(403);
  });

  it('resolves once with a note; a second resolution is a 409; the value reaches both tablets’ pulls stamped by the desk', async () => {
    t.clock.advance(5_000);
    const noNote = await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(supervisorA.accessToken))
      .send({ value: 10 });
    expect(noNote.status).toBe(400);
    expect(noNote.body.message).toContain('note');
    await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(supervisorA.accessToken))
      .send({ value: 10, note: 'Re-measured at the bench: exo 10°' })
      .expect(200);
    await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(supervisorA.accessToken))
      .send({ value: -8, note: 'again' })
      .expect(409);
    for (const tablet of [studentTablet, colleagueTablet]) {
      const record = await pullRecord(tablet, ids.anglesId);
      expect(record.fields.objectiveHorizontalDeg).toBe(10);
      expect(record.stamps.objectiveHorizontalDeg).toMatchObject({
        by: supervisorAId,
        device: 'server',
      });
      expect(record.conflicts).toEqual([]);
    }
    const list = await http()
      .get('/api/review/disputes')
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    expect((list.body.items as { id: string }[]).map((i) => i.id)).not.toContain(conflictId);
  });

  it('keeps every value of the field in the record history, with the dispute, its resolution and the note; CSV too', async () => {
    const res = await http()
      .get(`/api/review/records/amblyoscopeAngles/${ids.anglesId}/history`)
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    const entries = res.body.entries as {
      kind: string;
      field: string;
      value: unknown;
      by: { name: string } | null;
      device: { label: string } | null;
      note: string | null;
    }[];
    const values = entries.filter(
      (e) => e.kind === 'value' && e.field === 'objectiveHorizontalDeg',
    );
    expect(values.map((e) => [e.value, e.by?.name, e.device?.label])).toEqual([
      [12, 'Ada Quill', 'Room 2 tablet'],
      [14, 'Ada Quill', 'Room 2 tablet'],
      [-8, 'Bram Osei', 'Room 3 tablet'],
      [10, 'Corin Hale', 'the Review desk (server)'],
    ]);
    expect(entries.map((e) => e.kind)).toEqual(
      expect.arrayContaining(['dispute-opened', 'dispute-resolved']),
    );
    expect(entries.find((e) => e.kind === 'dispute-resolved')).toMatchObject({
      value: 10,
      note: 'Re-measured at the bench: exo 10°',
      by: { name: 'Corin Hale' },
    });

    const csv = await http()
      .get(`/api/review/records/amblyoscopeAngles/${ids.anglesId}/history.csv`)
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    expect(csv.headers['content-type']).toContain('text/csv');
    const lines = csv.text.trim().split('\r\n');
    expect(lines[0]).toBe(
      'time (UTC),time (clinic),kind,collection,record id,field,field label,value,previous value,by,by id,tablet,tablet id,version,hlc,note,dispute id',
    );
    const resolvedLine = lines.find((l) => l.includes(',dispute-resolved,'));
    expect(resolvedLine).toContain('Objective horizontal angle,10,');
    expect(resolvedLine).toContain('Re-measured at the bench: exo 10°');
    expect(
      lines.filter(
        (l) => l.includes(',value,amblyoscopeAngles,') && l.includes('objectiveHorizontalDeg'),
      ),
    ).toHaveLength(4);
    // 2026-12-01 09:00 UTC and on is 22:00 and on in Auckland (UTC+13).
    expect(lines[1]).toMatch(/^2026-12-01T09:\d\d:\d\d\.\d{3}Z,2026-12-01 22:\d\d:\d\d,/);
    await http()
      .get(`/api/review/records/amblyoscopeAngles/${ids.anglesId}/history.csv`)
      .set(bearer(supervisorB.accessToken))
      .expect(403);
    await http()
      .get(`/api/review/records/teeth/${ids.anglesId}/history`)
      .set(bearer(supervisorA.accessToken))
      .expect(400);
  });
});

describe('Countersigning and returns', () => {
  let ids: Awaited<ReturnType<typeof chartVisit>>;

  beforeAll(async () => {
    ids = await chartVisit();
    await signVisit(ids.visitId);
  });

  it('queues the student’s Signed visit for supervisors of its site, with a summary', async () => {
    const res = await http()
      .get('/api/review/countersign')
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    const item = (res.body.items as { visitId: string; sections: unknown }[]).find(
      (i) => i.visitId === ids.visitId,
    );
    expect(item).toMatchObject({
      siteName: 'Harbour Street Clinic',
      date: '2026-12-01',
      reason: 'Review of intermittent exotropia',
      patient: { name: 'Mira Tenby', dateOfBirth: '2017-03-14' },
      clinician: { name: 'Ada Quill' },
      openDisputes: 0,
    });
    expect(item!.sections).toEqual([
      expect.objectContaining({
        collection: 'amblyoscopeAngles',
        fields: expect.objectContaining({ objectiveHorizontalDeg: 12 }),
      }),
    ]);
    const other = await http()
      .get('/api/review/countersign')
      .set(bearer(supervisorB.accessToken))
      .expect(200);
    expect(other.body.items).toEqual([]);
    await http().get('/api/review/countersign').set(bearer(orthoptistDesk.accessToken)).expect(403);
    const summary = await http()
      .get('/api/review/summary')
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    expect(summary.body.awaitingCountersign).toBeGreaterThanOrEqual(1);
  });

  it('returns the visit with a comment the author’s tablet pulls; audit written; role and scope enforced', async () => {
    await http()
      .post(`/api/review/visits/${ids.visitId}/return`)
      .set(bearer(supervisorB.accessToken))
      .send({ comment: 'x' })
      .expect(403);
    await http()
      .post(`/api/review/visits/${ids.visitId}/return`)
      .set(bearer(orthoptistDesk.accessToken))
      .send({ comment: 'x' })
      .expect(403);
    const empty = await http()
      .post(`/api/review/visits/${ids.visitId}/return`)
      .set(bearer(supervisorA.accessToken))
      .send({ comment: '  ' });
    expect(empty.status).toBe(400);
    expect(empty.body.message).toContain('comment');
    t.clock.advance(5_000);
    await http()
      .post(`/api/review/visits/${ids.visitId}/return`)
      .set(bearer(supervisorA.accessToken))
      .send({ comment: 'Please repeat the objective angle with the patient’s glasses on.' })
      .expect(200);
    const visit = await pullRecord(studentTablet, ids.visitId);
    expect(visit.fields).toMatchObject({
      status: 'draft',
      returnedComment: 'Please repeat the objective angle with the patient’s glasses on.',
      signedBy: studentId,
    });
    expect(visit.stamps.returnedComment).toMatchObject({ by: supervisorAId, device: 'server' });
    expect(await auditKinds(ids.visitId)).toContain('review.returned');
    const queue = await http()
      .get('/api/review/countersign')
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    expect((queue.body.items as { visitId: string }[]).map((i) => i.visitId)).not.toContain(
      ids.visitId,
    );
    // A draft cannot be returned again.
    await http()
      .post(`/api/review/visits/${ids.visitId}/return`)
      .set(bearer(supervisorA.accessToken))
      .send({ comment: 'again' })
      .expect(409);
  });

  it('countersigns the visit once signed again; the author pulls it Countersigned; audit written', async () => {
    await signVisit(ids.visitId);
    await http()
      .post(`/api/review/visits/${ids.visitId}/countersign`)
      .set(bearer(supervisorB.accessToken))
      .send({})
      .expect(403);
    await http()
      .post(`/api/review/visits/${ids.visitId}/countersign`)
      .set(bearer(orthoptistDesk.accessToken))
      .send({})
      .expect(403);
    t.clock.advance(5_000);
    const res = await http()
      .post(`/api/review/visits/${ids.visitId}/countersign`)
      .set(bearer(supervisorA.accessToken))
      .send({})
      .expect(200);
    expect(res.body.status).toBe('countersigned');
    const visit = await pullRecord(studentTablet, ids.visitId);
    expect(visit.fields).toMatchObject({
      status: 'countersigned',
      countersignedBy: supervisorAId,
      countersignedAt: t.clock.now().toISOString(),
    });
    expect(visit.stamps.status).toMatchObject({ by: supervisorAId, device: 'server' });
    expect(await auditKinds(ids.visitId)).toEqual(
      expect.arrayContaining(['review.returned', 'review.countersigned']),
    );
    await http()
      .post(`/api/review/visits/${ids.visitId}/countersign`)
      .set(bearer(supervisorA.accessToken))
      .send({})
      .expect(409);

    const history = await http()
      .get(`/api/review/records/visit/${ids.visitId}/history`)
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    const kinds = (history.body.entries as { kind: string }[])
      .map((e) => e.kind)
      .filter((k) => k !== 'value' && k !== 'dispute-opened');
    expect(kinds).toEqual(['signed', 'returned', 'signed', 'countersigned']);
  });

  it('refuses to countersign a visit with an open dispute', async () => {
    const other = await chartVisit();
    await signVisit(other.visitId);
    await openAngleDispute(other.anglesId, other.anglesVersion, [16, 18]);
    const res = await http()
      .post(`/api/review/visits/${other.visitId}/countersign`)
      .set(bearer(supervisorA.accessToken))
      .send({});
    expect(res.status).toBe(409);
    expect(res.body.message).toContain('open dispute');
  });
});

describe('a dispute on a Signed visit', () => {
  it('is resolved as an Addendum that keeps the signed value beside the correction', async () => {
    const ids = await chartVisit();
    await signVisit(ids.visitId);
    const conflictId = await openAngleDispute(ids.anglesId, ids.anglesVersion, [20, 22]);
    const detail = await http()
      .get(`/api/review/disputes/${conflictId}`)
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    expect(detail.body.signedVisit).toBe(true);
    t.clock.advance(5_000);
    await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(supervisorA.accessToken))
      .send({ value: 21, note: 'Both tablets measured after signing; 21° confirmed' })
      .expect(200);
    const rows = await sqlRows<{
      signed_value: unknown;
      previous_value: unknown;
      value: unknown;
      note: string;
      by_user: string;
      visit_status: string;
    }>(
      t.em(),
      `select "signed_value", "previous_value", "value", "note", "by_user"::text as "by_user", "visit_status" from "review_addendum" where "conflict_id" = ?`,
      [conflictId],
    );
    expect(rows).toEqual([
      {
        signed_value: 12,
        previous_value: 22,
        value: 21,
        note: 'Both tablets measured after signing; 21° confirmed',
        by_user: supervisorAId,
        visit_status: 'signed',
      },
    ]);
    const history = await http()
      .get(`/api/review/records/visit/${ids.visitId}/history`)
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    const addendum = (history.body.entries as Record<string, unknown>[]).find(
      (e) => e.kind === 'addendum',
    );
    expect(addendum).toMatchObject({
      field: 'amblyoscopeAngles.objectiveHorizontalDeg',
      previousValue: 12,
      value: 21,
      note: 'Both tablets measured after signing; 21° confirmed',
      by: { name: 'Corin Hale' },
    });
    // The Addendum reaches the tablets as an `addendum` record, stamped by the supervisor.
    const synced = await pullCollection(studentTablet, 'addendum');
    const mine = synced.filter((r) => r.fields.conflictId === conflictId);
    expect(mine).toHaveLength(1);
    expect(mine[0]!.fields).toEqual({
      siteId: siteA,
      visitId: ids.visitId,
      patientId: ids.patientId,
      authorId: supervisorAId,
      writtenAt: t.clock.now().toISOString(),
      text: 'Both tablets measured after signing; 21° confirmed',
      amendedCollection: 'amblyoscopeAngles',
      amendedRecordId: ids.anglesId,
      amendedField: 'objectiveHorizontalDeg',
      previousValue: 12,
      newValue: 21,
      conflictId,
    });
    expect(mine[0]!.deleted).toBe(false);
    expect(mine[0]!.stamps.text).toMatchObject({ by: supervisorAId, device: 'server' });
    expect(mine[0]!.version).toBeGreaterThan(0);
    const [link] = await sqlRows<{ addendum_record_id: string }>(
      t.em(),
      `select "addendum_record_id"::text as "addendum_record_id" from "review_addendum" where "conflict_id" = ?`,
      [conflictId],
    );
    expect(link?.addendum_record_id).toBe(mine[0]!.id);
    // Publishing again writes nothing more.
    expect(await t.app.get(AddendumPublisher).publishPending()).toEqual([]);
    expect(
      (await pullCollection(studentTablet, 'addendum')).filter(
        (r) => r.fields.conflictId === conflictId,
      ),
    ).toHaveLength(1);

    const angles = await http()
      .get(`/api/review/records/amblyoscopeAngles/${ids.anglesId}/history`)
      .set(bearer(supervisorA.accessToken))
      .expect(200);
    const signedValue = (
      angles.body.entries as { kind: string; field: string; value: unknown }[]
    ).filter((e) => e.kind === 'value' && e.field === 'objectiveHorizontalDeg');
    expect(signedValue.map((e) => e.value)).toEqual([12, 20, 22, 21]);
  });

  it('writes the Addendum in the resolving transaction: when it cannot be written, nothing is resolved', async () => {
    const ids = await chartVisit();
    await signVisit(ids.visitId);
    const conflictId = await openAngleDispute(ids.anglesId, ids.anglesVersion, [50, 51]);
    const failing = vi
      .spyOn(t.app.get(AddendumStore), 'recordForResolution')
      .mockRejectedValueOnce(new Error('disk full while writing the Addendum'));
    try {
      await http()
        .post(`/api/conflicts/${conflictId}/resolve`)
        .set(bearer(supervisorA.accessToken))
        .send({ value: 50, note: 'Re-measured: 50°' })
        .expect(500);
    } finally {
      failing.mockRestore();
    }
    const [dispute] = await sqlRows<{ status: string }>(
      t.em(),
      `select "status" from "sync_conflict" where "id" = ?`,
      [conflictId],
    );
    expect(dispute?.status).toBe('open');
    expect((await pullRecord(studentTablet, ids.anglesId)).fields.objectiveHorizontalDeg).toBe(51);
    // Resolved again, it records its Addendum and publishes it.
    await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(supervisorA.accessToken))
      .send({ value: 50, note: 'Re-measured: 50°' })
      .expect(200);
    const synced = await pullCollection(studentTablet, 'addendum');
    expect(
      synced.filter((r) => r.fields.conflictId === conflictId).map((r) => r.fields.newValue),
    ).toEqual([50]);
  });

  it('has no trigger on the disputes table: closing a dispute outside the resolution records no Addendum', async () => {
    const triggers = await sqlRows<{ tgname: string }>(
      t.em(),
      `select "tgname" from "pg_trigger" where "tgrelid" = 'sync_conflict'::regclass and not "tgisinternal"`,
    );
    expect(triggers).toEqual([]);
    const ids = await chartVisit();
    await signVisit(ids.visitId);
    const conflictId = await openAngleDispute(ids.anglesId, ids.anglesVersion, [60, 61]);
    await sqlRows(
      t.em(),
      `update "sync_conflict" set "status" = 'resolved', "resolved_at" = now(), "note" = 'by hand' where "id" = ?`,
      [conflictId],
    );
    const rows = await sqlRows(t.em(), `select 1 from "review_addendum" where "conflict_id" = ?`, [
      conflictId,
    ]);
    expect(rows).toEqual([]);
  });

  it('leaves a dispute on a draft visit without an Addendum', async () => {
    const ids = await chartVisit();
    const conflictId = await openAngleDispute(ids.anglesId, ids.anglesVersion, [5, 6]);
    await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(supervisorA.accessToken))
      .send({ value: 5, note: 'ok' })
      .expect(200);
    const rows = await sqlRows(t.em(), `select 1 from "review_addendum" where "conflict_id" = ?`, [
      conflictId,
    ]);
    expect(rows).toEqual([]);
    const synced = await pullCollection(studentTablet, 'addendum');
    expect(synced.filter((r) => r.fields.conflictId === conflictId)).toEqual([]);
  });

  it('keeps the resolution when publishing its Addendum fails, and the recovery sweep publishes it', async () => {
    const ids = await chartVisit();
    await signVisit(ids.visitId);
    const conflictId = await openAngleDispute(ids.anglesId, ids.anglesVersion, [40, 41]);
    const publisher = t.app.get(AddendumPublisher);
    const failing = vi
      .spyOn(publisher as unknown as { publish: () => Promise<string | null> }, 'publish')
      .mockRejectedValueOnce(new Error('connection lost while publishing'));
    try {
      await http()
        .post(`/api/conflicts/${conflictId}/resolve`)
        .set(bearer(supervisorA.accessToken))
        .send({ value: 41, note: 'Re-measured: 41°' })
        .expect(200);
      expect(failing).toHaveBeenCalledTimes(1);
    } finally {
      failing.mockRestore();
    }
    expect((await pullRecord(studentTablet, ids.anglesId)).fields.objectiveHorizontalDeg).toBe(41);
    const unpublished = await sqlRows(
      t.em(),
      `select 1 from "review_addendum" where "conflict_id" = ? and "addendum_record_id" is null`,
      [conflictId],
    );
    expect(unpublished).toHaveLength(1);
    const written = await publisher.publishPending();
    expect(written).toHaveLength(1);
    const synced = await pullCollection(studentTablet, 'addendum');
    expect(synced.find((r) => r.id === written[0])?.fields).toMatchObject({
      conflictId,
      previousValue: 12,
      newValue: 41,
    });
  });

  it('publishes an Addendum the resolving request left unpublished on the next run', async () => {
    const ids = await chartVisit();
    await signVisit(ids.visitId);
    const conflictId = await openAngleDispute(ids.anglesId, ids.anglesVersion, [30, 31]);
    await http()
      .post(`/api/conflicts/${conflictId}/resolve`)
      .set(bearer(supervisorA.accessToken))
      .send({ value: 30, note: 'Re-measured: 30°' })
      .expect(200);
    // As if the process had stopped between the resolution and the publishing.
    const [row] = await sqlRows<{ addendum_record_id: string }>(
      t.em(),
      `select "addendum_record_id"::text as "addendum_record_id" from "review_addendum" where "conflict_id" = ?`,
      [conflictId],
    );
    await sqlRows(t.em(), `delete from "sync_record" where "id" = ?`, [row!.addendum_record_id]);
    await sqlRows(
      t.em(),
      `update "review_addendum" set "addendum_record_id" = null where "conflict_id" = ?`,
      [conflictId],
    );
    const written = await t.app.get(AddendumPublisher).publishPending();
    expect(written).toHaveLength(1);
    const synced = await pullCollection(studentTablet, 'addendum');
    expect(synced.find((r) => r.id === written[0])?.fields).toMatchObject({
      conflictId,
      text: 'Re-measured: 30°',
      previousValue: 12,
      newValue: 30,
    });
  });
});
