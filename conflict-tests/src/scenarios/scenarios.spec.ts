// Multi-tablet scenarios of docs/sync-protocol.md, each read as a table of steps: the real PWA
// engine on fake-indexeddb, the real server and PostgreSQL, a network that misbehaves on purpose.
import { SCHEMA_VERSION } from '@fuselight/shared';
import type { TestUser } from '@server/testing/identity-factory';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startClinic, type Clinic } from '../harness/clinic-server';
import { expectConverged } from '../harness/convergence';
import {
  deskToken,
  listConflicts,
  pullEverything,
  resolveConflict,
  serverSnapshot,
} from '../harness/server-view';
import { SimTablet } from '../harness/sim-tablet';
import { ChartingRepository } from '@pwa/data/charting/charting-repository';

let clinic: Clinic;
let nurse: TestUser;
let junior: TestUser;
let supervisor: TestUser;
let supervisorToken: string;
const tablets: SimTablet[] = [];

beforeAll(async () => {
  clinic = await startClinic();
  nurse = await clinic.person('orthoptist');
  junior = await clinic.person('orthoptist');
  supervisor = await clinic.person('supervisor');
  supervisorToken = await deskToken(clinic, supervisor);
});

afterAll(async () => {
  for (const tablet of tablets) await tablet.close();
  await clinic?.close();
});

async function tablet(
  name: string,
  people: TestUser[] = [nurse, junior, supervisor],
  options = {},
) {
  const created = await SimTablet.create(clinic, name, people, options);
  tablets.push(created);
  return created;
}

function patient(overrides: Record<string, unknown> = {}) {
  return {
    siteId: clinic.siteId,
    givenName: 'Amara',
    familyName: 'Okafor',
    dateOfBirth: '2016-04-09',
    clinicNumber: `FL-${Math.floor(Math.random() * 1e6)}`,
    ...overrides,
  };
}

/** A patient and a visit made on `a`, synced to every tablet given. */
async function sharedVisit(a: SimTablet, others: SimTablet[]) {
  const patientId = await a.create('patient', patient());
  const visitId = await a.create('visit', {
    siteId: clinic.siteId,
    patientId,
    date: '2026-12-01',
    clinicianId: nurse.id,
    status: 'draft',
  });
  expect((await a.sync()).kind).toBe('synced');
  for (const other of others) expect((await other.sync()).kind).toBe('synced');
  return { patientId, visitId };
}

function statusesOf(t: SimTablet, recordId: string) {
  return t.acks.filter((ack) => ack.entry.recordId === recordId).map((ack) => ack.result.status);
}

describe('two tablets edit one visit offline', () => {
  it.each([
    // tablet A sets          tablet B sets                        A's result  B's result
    [{ reason: 'Headaches' }, { needsCountersign: true }, 'applied', 'merged'],
    [{ reason: 'Headaches' }, { reason: 'Headaches' }, 'applied', 'merged'],
  ] as const)(
    'A sets %o, B sets %o: A is %s, B is %s, and both values survive everywhere',
    async (editA, editB, statusA, statusB) => {
      const a = await tablet('merge-a');
      const b = await tablet('merge-b');
      const { visitId } = await sharedVisit(a, [b]);
      a.network.offline = true;
      b.network.offline = true;
      await a.update('visit', visitId, editA);
      await b.update('visit', visitId, editB);
      a.network.offline = false;
      b.network.offline = false;
      await a.sync();
      await b.sync();
      await a.sync();
      expect(statusesOf(a, visitId).at(-1)).toBe(statusA);
      expect(statusesOf(b, visitId).at(-1)).toBe(statusB);
      for (const t of [a, b]) {
        expect((await t.get('visit', visitId))?.fields).toMatchObject({ ...editA, ...editB });
        expect((await t.get('visit', visitId))?.pendingFields).toEqual([]);
      }
      await expectConverged(clinic, [a, b]);
    },
  );
});

describe('two tablets start the same Section of a visit offline', () => {
  it('write one record (the id is derived from the visit), merge their fields, and converge', async () => {
    const a = await tablet('section-a');
    const b = await tablet('section-b');
    const { visitId } = await sharedVisit(a, [b]);
    a.network.offline = true;
    b.network.offline = true;
    const idA = await new ChartingRepository(a.records).saveSection(
      visitId,
      'coverTest',
      { nearFinding: 'phoria' },
      a.ctx(),
    );
    const idB = await new ChartingRepository(b.records).saveSection(
      visitId,
      'coverTest',
      { distanceFinding: 'tropia' },
      b.ctx(),
    );
    expect(idB).toBe(idA);
    a.network.offline = false;
    b.network.offline = false;
    await a.sync();
    await b.sync();
    await a.sync();
    // step          result
    expect(statusesOf(a, idA).at(-1)).toBe('applied');
    expect(statusesOf(b, idA).at(-1)).toBe('merged');
    for (const t of [a, b]) {
      expect((await t.get('coverTest', idA))?.fields).toMatchObject({
        nearFinding: 'phoria',
        distanceFinding: 'tropia',
      });
    }
    await expectConverged(clinic, [a, b]);
  });
});

describe('two tablets set the same field to different values', () => {
  it('opens a dispute with both candidates, shows the later stamp provisionally, and converges on the supervisor’s choice', async () => {
    const a = await tablet('dispute-a');
    const b = await tablet('dispute-b');
    const { visitId } = await sharedVisit(a, [b]);
    // step                              tablet A                 tablet B (clock 1 min ahead)
    a.network.offline = true;
    b.network.offline = true;
    b.skewMs = 60_000;
    await a.update('visit', visitId, { reason: 'Double vision' });
    await b.update('visit', visitId, { reason: 'Eye strain' });
    a.network.offline = false;
    b.network.offline = false;
    await a.sync(); //                    applied
    await b.sync(); //                                             conflict on reason
    await a.sync();
    expect(statusesOf(a, visitId).at(-1)).toBe('applied');
    expect(b.acks.at(-1)?.result).toMatchObject({ status: 'conflict', conflicts: ['reason'] });

    // The provisional value is the greater stamp: B's clock was ahead.
    for (const t of [a, b]) {
      const visit = await t.get('visit', visitId);
      expect(visit?.fields.reason).toBe('Eye strain');
      expect(visit?.conflicts).toEqual(['reason']);
    }
    const [dispute, ...others] = await listConflicts(clinic, supervisorToken, {
      status: 'open',
      recordId: visitId,
    });
    expect(others).toEqual([]);
    expect(dispute?.field).toBe('reason');
    expect(dispute?.provisional).toBe('Eye strain');
    expect(dispute?.candidates.map((c) => c.value).sort()).toEqual(['Double vision', 'Eye strain']);
    expect(new Set(dispute?.candidates.map((c) => c.device))).toEqual(
      new Set([a.device.deviceId, b.device.deviceId]),
    );

    const resolved = await resolveConflict(
      clinic,
      supervisorToken,
      dispute!.id,
      'Double vision at near',
      'Both were right: the double vision is at near work',
    );
    expect(resolved.status).toBe(200);
    const again = await resolveConflict(clinic, supervisorToken, dispute!.id, 'x', 'twice');
    expect(again.status).toBe(409);

    await a.sync();
    await b.sync();
    for (const t of [a, b]) {
      const visit = await t.get('visit', visitId);
      expect(visit?.fields.reason).toBe('Double vision at near');
      expect(visit?.conflicts).toEqual([]);
    }
    await expectConverged(clinic, [a, b]);
  });
});

describe('a delete races an edit', () => {
  it('A deletes the visit while B edits it: a dispute on the tombstone, and both tablets agree', async () => {
    const a = await tablet('delete-a');
    const b = await tablet('delete-b');
    const { visitId } = await sharedVisit(a, [b]);
    a.network.offline = true;
    b.network.offline = true;
    await a.remove('visit', visitId);
    await b.update('visit', visitId, { reason: 'Follow-up' });
    a.network.offline = false;
    b.network.offline = false;
    await a.sync();
    await b.sync();
    await a.sync();
    expect(statusesOf(a, visitId).at(-1)).toBe('applied');
    const bResult = b.acks.at(-1)?.result;
    expect(bResult?.status).toBe('conflict');
    expect(bResult && 'conflicts' in bResult ? bResult.conflicts : []).toContain('deleted');
    const disputes = await listConflicts(clinic, supervisorToken, {
      status: 'open',
      recordId: visitId,
    });
    expect(disputes.map((d) => d.field)).toContain('deleted');
    // B's edit of the reason is kept whatever the tombstone's fate.
    expect((await a.get('visit', visitId))?.fields.reason).toBe('Follow-up');
    await expectConverged(clinic, [a, b]);
  });
});

describe('a tablet offline for a week', () => {
  it('queues hundreds of edits, signs in again when its token has expired, and sends every one', async () => {
    const outreach = await tablet('week-offline');
    const clinicTablet = await tablet('week-clinic');
    const ids: string[] = [];
    for (let i = 0; i < 20; i += 1)
      ids.push(await clinicTablet.create('patient', patient({ familyName: `Week${i}` })));
    await clinicTablet.sync();
    await outreach.sync();
    outreach.network.offline = true;
    const expected = new Map<string, string>();
    // 7 days, 40 edits a day on 20 patients; the clinic keeps working on other fields.
    for (let day = 0; day < 7; day += 1) {
      for (let n = 0; n < 40; n += 1) {
        const id = ids[(day * 40 + n) % ids.length]!;
        const notes = `Day ${day + 1} note ${n}`;
        await outreach.update('patient', id, { notes });
        expected.set(id, notes);
        clinic.t.clock.advance(60_000);
      }
      await clinicTablet.update('patient', ids[day]!, { givenName: `Clinic${day}` });
      await clinicTablet.sync();
      clinic.t.clock.advance(23 * 60 * 60_000);
    }
    // Unsent edits of a record coalesce: one entry per patient, nothing lost.
    expect(await outreach.db.outbox.count()).toBe(20);
    outreach.network.offline = false;
    const outcome = await outreach.syncUntilSettled();
    expect(outcome.kind).toBe('synced');
    expect(await outreach.db.outbox.count()).toBe(0);
    // Its token had expired during the week: the 401 sent the author to sign in again.
    expect(outreach.auth.unauthorized).toContain(nurse.id);
    for (const [id, notes] of expected) {
      const record = await outreach.get('patient', id);
      expect(record?.fields.notes).toBe(notes);
    }
    expect((await outreach.get('patient', ids[3]!))?.fields.givenName).toBe('Clinic3');
    await expectConverged(clinic, [outreach, clinicTablet]);
  });
});

describe('a reply lost after the server committed', () => {
  it('resends the same change, gets "replayed", applies it once, and keeps a later edit apart', async () => {
    const a = await tablet('lost-reply');
    const id = await a.create('patient', patient());
    a.network.plan({ kind: 'lose-reply' });
    expect((await a.sync()).kind).toBe('failed');
    const [sent] = await a.entries();
    expect(sent?.attempts).toBe(1);
    // An edit made now must not join the change the server may already hold.
    await a.update('patient', id, { notes: 'Arrived late' });
    expect(await a.db.outbox.count()).toBe(2);
    expect(a.engine.snapshot().phase).toBe('waiting-to-retry');
    expect((await a.sync()).kind).toBe('synced');
    const results = a.acks.filter((ack) => ack.entry.recordId === id).map((ack) => ack.result);
    expect(results[0]).toMatchObject({ changeId: sent!.changeId, replayed: true });
    expect(results[1]?.status).toBe('applied');
    expect(await a.db.outbox.count()).toBe(0);
    expect((await a.get('patient', id))?.fields.notes).toBe('Arrived late');
    await expectConverged(clinic, [a]);
  });

  it.each([
    // fault on the push           then
    [{ kind: 'drop' } as const, 'failed'],
    [{ kind: 'gateway-error' } as const, 'failed'],
    [{ kind: 'duplicate' } as const, 'synced'],
  ])('a push that meets %o is %s at first and the entry is never dropped', async (fault, first) => {
    const a = await tablet(`fault-${fault.kind}`);
    const id = await a.create('patient', patient());
    a.network.plan(fault);
    expect((await a.sync()).kind).toBe(first);
    expect(await a.syncUntilSettled()).toMatchObject({ kind: 'synced' });
    const token = await a.auth.tokenFor(nurse.id);
    const server = await serverSnapshot(clinic, token!);
    expect(server[`patient/${id}`]?.fields.familyName).toBe('Okafor');
    expect(server[`patient/${id}`]?.version).toBe((await a.get('patient', id))?.version);
  });
});

describe('a tablet clock a day ahead', () => {
  it('is rejected for a broken clock; the entry stays, visible with the error, for its author', async () => {
    const a = await tablet('clock-ahead');
    a.skewMs = 25 * 60 * 60_000;
    const id = await a.create('patient', patient());
    expect((await a.sync()).kind).toBe('synced');
    const [entry] = await a.entries();
    expect(entry?.state).toBe('rejected');
    expect(entry?.error).toMatch(/clock|future|ahead/i);
    expect(entry?.authorId).toBe(nurse.id);
    expect(a.engine.snapshot()).toMatchObject({ rejectedCount: 1, outboxCount: 1 });
    // Still on the tablet, still pending locally.
    expect((await a.get('patient', id))?.pendingFields).toContain('familyName');
    // Further syncs do not send it again or lose it.
    await a.sync();
    expect(await a.entries()).toHaveLength(1);
  });
});

describe('a revoked tablet', () => {
  it('gets 401, cannot sign in again, and keeps every edit in its Outbox', async () => {
    const a = await tablet('revoked');
    const id = await a.create('patient', patient());
    await a.sync();
    await a.update('patient', id, { notes: 'Edited after revocation' });
    await clinic.revoke(a.device.deviceId);
    const outcome = await a.sync();
    expect(outcome.kind).toBe('synced');
    expect(a.auth.unauthorized).toContain(nurse.id);
    expect(a.engine.snapshot().needsSignIn).toContain(nurse.id);
    expect(a.engine.snapshot().error).toMatch(/signs in again/i);
    const entries = await a.entries();
    expect(entries).toHaveLength(1);
    expect(entries[0]).toMatchObject({
      state: 'pending',
      fields: { notes: 'Edited after revocation' },
    });
  });
});

describe('schema versions', () => {
  it('a tablet newer than the server gets 409: sync stops with the message and the Outbox is intact', async () => {
    const a = await tablet('newer-app', [nurse], { schemaVersion: SCHEMA_VERSION + 1 });
    await a.create('patient', patient());
    const outcome = await a.sync();
    expect(outcome.kind).toBe('blocked');
    expect(a.engine.snapshot().phase).toBe('blocked');
    expect(a.engine.snapshot().error).toMatch(/server/i);
    const entries = await a.entries();
    expect(entries).toHaveLength(1);
    expect(entries[0]?.state).toBe('pending');
  });
});

describe('authorship', () => {
  it('pushes each entry under its author’s session; a signed-out author’s entries wait without blocking others', async () => {
    const a = await tablet('shared');
    const mine = await a.create('patient', patient({ familyName: 'Mine' }), nurse);
    const theirs = await a.create('patient', patient({ familyName: 'Theirs' }), junior);
    a.auth.signedOut.add(junior.id);
    await a.sync();
    const entries = await a.entries();
    expect(entries.map((e) => [e.recordId, e.authorId])).toEqual([[theirs, junior.id]]);
    expect(a.engine.snapshot().needsSignIn).toEqual([junior.id]);
    a.auth.signedOut.delete(junior.id);
    await a.syncUntilSettled();
    const token = await a.auth.tokenFor(nurse.id);
    const server = await serverSnapshot(clinic, token!);
    const pulled = await pullEverything(clinic, token!);
    const byOf = (id: string) => pulled.find((r) => r.id === id)?.stamps.familyName?.by;
    expect(byOf(mine)).toBe(nurse.id);
    expect(byOf(theirs)).toBe(junior.id);
    expect(server[`patient/${theirs}`]?.fields.familyName).toBe('Theirs');
  });

  it('an expired token is a 401 that costs no retry and drops nothing', async () => {
    const a = await tablet('expired');
    await a.create('patient', patient());
    await a.auth.tokenFor(nurse.id);
    a.auth.spoilToken(nurse.id);
    const outcome = await a.sync();
    expect(outcome.kind).toBe('synced');
    expect(a.engine.snapshot().consecutiveFailures).toBe(0);
    expect(await a.db.outbox.count()).toBe(1);
    await a.sync();
    expect(await a.db.outbox.count()).toBe(0);
  });
});

describe('the convergence check', () => {
  it.each([
    [
      'a server record deleted on the tablet only',
      /: records held: /,
      (t: SimTablet, id: string) => t.db.records.delete(['patient', id] as unknown as string),
    ],
    [
      'a field changed on the tablet only',
      /: records: /,
      async (t: SimTablet, id: string) => {
        const record = (await t.get('patient', id))!;
        await t.db.records.put({ ...record, fields: { ...record.fields, notes: 'Here only' } });
      },
    ],
    [
      'a record the server does not hold',
      /: records held: /,
      async (t: SimTablet, id: string) => {
        const record = (await t.get('patient', id))!;
        await t.db.records.put({ ...record, id: crypto.randomUUID() });
      },
    ],
  ])('reports a tablet with %s as not converged', async (_, message, spoil) => {
    const a = await tablet(`check-${tablets.length}`);
    const id = await a.create('patient', patient());
    await expectConverged(clinic, [a]);
    await spoil(a, id);
    await expect(expectConverged(clinic, [a])).rejects.toThrow(message);
  });
});
