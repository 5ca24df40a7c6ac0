import request from 'supertest';
import { v7 as uuidv7 } from 'uuid';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RecordStore } from '../records/record-store';
import { sqlRows } from '../database/sql';
import { tabletAt, type LetterTablet } from '../letters/testing/letters-test-kit';
import { bearer, createSite, signInAs } from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';
import { startVersionsBelowPowerOfTen, versionLengths } from '../testing/version-boundary';
import { FhirHandoffService, type HandoffRunSummary } from './fhir-handoff.service';
import {
  pushSignedVisit,
  startFakeFhirReceiver,
  type FakeFhirReceiver,
} from './testing/handoff-kit';

describe('the hand-off of signed visits to the hospital record', () => {
  let receiver: FakeFhirReceiver;
  let t: TestApp;
  let tablet: LetterTablet;
  let siteId: string;
  const handoff = () => t.app.get(FhirHandoffService);
  /**
   * One run of the worker that waits until `queued` occasions were read: the scan reads below the
   * cluster's safe version bound, which other test files' open transactions hold back a moment.
   */
  const run = async (queued = 0): Promise<HandoffRunSummary> => {
    const summary: HandoffRunSummary = { queued: 0, sent: 0, retried: 0, refused: 0 };
    const deadline = Date.now() + 20_000;
    await handoff().scan(summary);
    while (summary.queued < queued && Date.now() < deadline) {
      await new Promise((resolve) => setTimeout(resolve, 100));
      await handoff().scan(summary);
    }
    await handoff().sendDue(summary);
    return summary;
  };
  const visitFields = async (id: string) => (await t.app.get(RecordStore).byId(t.em(), id))!.fields;
  const outbox = (visitId: string) =>
    sqlRows<{ occasion: string; status: string; attempts: number; last_error: string | null }>(
      t.em(),
      `select "occasion", "status", "attempts", "last_error" from "fhir_outbox" where "visit_id" = ?::uuid order by "created_at", "occasion"`,
      [visitId],
    );

  beforeAll(async () => {
    receiver = await startFakeFhirReceiver();
    t = await createTestApp({ env: { FHIR_BASE_URL: receiver.url } });
    siteId = (await createSite(t, { name: 'Harbourside Eye Clinic' })).id;
    tablet = await tabletAt(t, 'orthoptist', [siteId]);
  });
  afterAll(async () => {
    await t.close();
    await receiver.close();
  });

  it('sends each signed visit once as a transaction the receiver validates, and says so on the visit', async () => {
    // Data that has lived: visits on both sides of a change in the versions' digit count.
    const before = await pushSignedVisit(tablet, siteId);
    await startVersionsBelowPowerOfTen(t.db.url, { transactionsBefore: 2 });
    const pushed = [before];
    for (let i = 0; i < 4; i += 1) pushed.push(await pushSignedVisit(tablet, siteId));
    const versions = await Promise.all(
      pushed.map(async (p) => (await t.app.get(RecordStore).byId(t.em(), p.visitId))!.version),
    );
    expect(versionLengths(versions).length).toBe(2);

    const first = await run(5);
    expect(first).toMatchObject({ queued: 5, sent: 5, retried: 0, refused: 0 });
    expect(receiver.received).toHaveLength(5);
    for (const { bundle } of receiver.received) expect(bundle.type).toBe('transaction');
    const encounters = receiver.received.map(
      (r) => r.bundle.entry?.find((e) => e.resource?.resourceType === 'Encounter')?.resource?.id,
    );
    expect(encounters.sort()).toEqual(pushed.map((p) => p.visitId).sort());
    for (const p of pushed) {
      expect(await visitFields(p.visitId)).toMatchObject({
        hospitalRecordState: 'sent',
        hospitalRecordAt: t.clock.now().toISOString(),
        hospitalRecordNote: null,
      });
    }
    // The visits' own write-back is a change of the visit too: nothing is sent twice.
    expect(await handoff().runOnce()).toMatchObject({ queued: 0, sent: 0 });
    expect(receiver.received).toHaveLength(5);
  });

  it('lists what the receiver accepted on its page, and it refuses what is not a valid transaction', async () => {
    const visit = await pushSignedVisit(tablet, siteId, { clinicNumber: 'HX-PAGE-1' });
    await run(1);
    const page = await (await fetch(receiver.page)).text();
    expect(page).toContain('<td>HX-PAGE-1</td>');
    const invalid = await fetch(receiver.url, {
      method: 'POST',
      headers: { 'content-type': 'application/fhir+json' },
      body: JSON.stringify({
        resourceType: 'Bundle',
        type: 'transaction',
        entry: [{ resource: { resourceType: 'Patient', gender: 'mostly' } }],
      }),
    });
    expect(invalid.status).toBe(400);
    const outcome = (await invalid.json()) as {
      resourceType: string;
      issue: { diagnostics: string }[];
    };
    expect(outcome.resourceType).toBe('OperationOutcome');
    expect(outcome.issue[0]?.diagnostics).toMatch(/Patient\.gender: Code "mostly" not found/);
    expect(await visitFields(visit.visitId)).toMatchObject({ hospitalRecordState: 'sent' });
  });

  it('sends again when the visit is countersigned and when an Addendum is written', async () => {
    const visit = await pushSignedVisit(tablet, siteId);
    await run(1);
    const supervisor = await signInAs(t, { role: 'supervisor', siteIds: [siteId] });
    await request(t.app.getHttpServer())
      .post(`/api/review/visits/${visit.visitId}/countersign`)
      .set(bearer(supervisor.accessToken))
      .send({})
      .expect(200);
    await tablet.pushOk('addendum', uuidv7(), {
      siteId,
      visitId: visit.visitId,
      patientId: visit.patientId,
      authorId: tablet.person.id,
      writtenAt: '2026-12-01T09:30:00.000Z',
      text: 'Near acuity repeated with the right reading glasses: N5.',
    });
    const count = receiver.received.length;
    expect(await run(2)).toMatchObject({ queued: 2, sent: 2 });
    expect(receiver.received.length).toBe(count + 2);
    expect((await outbox(visit.visitId)).map((r) => r.occasion.split(':')[0]).sort()).toEqual([
      'addendum',
      'countersigned',
      'signed',
    ]);
    const last = receiver.received[receiver.received.length - 1]!.bundle;
    const statuses = (last.entry ?? [])
      .map((e) => e.resource)
      .filter((r) => r?.resourceType === 'Observation')
      .map((r) => r!.status);
    expect(new Set(statuses)).toEqual(new Set(['amended']));
  });

  it('retries with back-off against a receiver that fails twice, then shows it sent', async () => {
    const visit = await pushSignedVisit(tablet, siteId);
    receiver.failNext(2);
    expect(await run(1)).toMatchObject({ queued: 1, retried: 1, sent: 0 });
    expect(await visitFields(visit.visitId)).toMatchObject({
      hospitalRecordState: 'waiting',
      hospitalRecordNote: expect.stringMatching(
        /^will retry: the hospital record answered 503: the FHIR server is busy/,
      ),
    });
    // Not due yet: nothing is sent before the back-off has passed.
    expect(await handoff().runOnce()).toMatchObject({ sent: 0, retried: 0 });
    t.clock.advance(30_000);
    expect(await handoff().runOnce()).toMatchObject({ retried: 1 });
    t.clock.advance(60_000);
    expect(await handoff().runOnce()).toMatchObject({ sent: 1 });
    expect(await outbox(visit.visitId)).toMatchObject([
      { status: 'sent', attempts: 3, last_error: null },
    ]);
    expect(await visitFields(visit.visitId)).toMatchObject({
      hospitalRecordState: 'sent',
      hospitalRecordAt: t.clock.now().toISOString(),
    });
  });

  it('keeps a refusal with its reason on the visit and loses nothing', async () => {
    const visit = await pushSignedVisit(tablet, siteId);
    receiver.refuseWith('Patient.identifier: the clinic number system is not registered here');
    try {
      expect(await run(1)).toMatchObject({ queued: 1, refused: 1 });
    } finally {
      receiver.refuseWith(null);
    }
    const fields = await visitFields(visit.visitId);
    expect(fields).toMatchObject({
      status: 'signed',
      hospitalRecordState: 'refused',
      hospitalRecordNote:
        'the hospital record answered 400: Patient.identifier: the clinic number system is not registered here',
    });
    expect(await outbox(visit.visitId)).toMatchObject([{ status: 'refused', attempts: 1 }]);
    // The refusal is final for that occasion: a later run does not send it again.
    expect(await handoff().runOnce()).toMatchObject({ sent: 0, refused: 0 });
    const acuity = (await t.app.get(RecordStore).byId(t.em(), visit.acuityId))!;
    expect(acuity.fields.rightDistanceCorrectedLogMar).toBe(0.1);
  });
});

describe('the hand-off without FHIR_BASE_URL', () => {
  it('queues and sends nothing', async () => {
    const t = await createTestApp();
    try {
      const site = await createSite(t);
      const tablet = await tabletAt(t, 'orthoptist', [site.id]);
      const visit = await pushSignedVisit(tablet, site.id);
      expect(await t.app.get(FhirHandoffService).runOnce()).toEqual({
        queued: 0,
        sent: 0,
        retried: 0,
        refused: 0,
      });
      const rows = await sqlRows(t.em(), `select 1 from "fhir_outbox"`);
      expect(rows).toEqual([]);
      const fields = (await t.app.get(RecordStore).byId(t.em(), visit.visitId))!.fields;
      expect(fields.hospitalRecordState).toBeUndefined();
    } finally {
      await t.close();
    }
  });
});

describe('the hospital record fields on a push', () => {
  it('refuses a tablet that writes them and names the field', async () => {
    const t = await createTestApp();
    try {
      const site = await createSite(t);
      const tablet = await tabletAt(t, 'orthoptist', [site.id]);
      const visit = await pushSignedVisit(tablet, site.id);
      const version = (await t.app.get(RecordStore).byId(t.em(), visit.visitId))!.version;
      const answer = await tablet.push(
        'visit',
        visit.visitId,
        { hospitalRecordState: 'sent', reason: 'Review' },
        version,
      );
      expect(answer.results[0]).toMatchObject({
        status: 'rejected',
        error:
          "changes.0: fields.hospitalRecordState: the hospital record's state is written by the clinic server's hand-off, never by a tablet",
      });
      const cleared = await tablet.push(
        'visit',
        visit.visitId,
        { hospitalRecordNote: null },
        version,
      );
      expect(cleared.results[0]?.status).not.toBe('rejected');
    } finally {
      await t.close();
    }
  });
});
