import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { v7 as uuidv7 } from 'uuid';
import {
  exampleLetterInput,
  exampleLetterRecords,
  letterLayoutOf,
  type JsonValue,
  type RecordFields,
} from '@fuselight/shared';
import { renderLetterPdf } from '@fuselight/shared/letter-pdf';
import { letterFonts } from '../letters/letter-fonts';
import { LetterSourceService } from '../letters/letter-source.service';
import { RecordAccess } from '../letters/record-access';
import { pdfText } from '../letters/pdf-text.testing';
import {
  pdfAttachmentOf,
  pushLetterScenario,
  startFakeSmtp,
  tabletAt,
  type FakeSmtp,
  type LetterScenario,
} from '../letters/testing/letters-test-kit';
import { createSite, createUser } from '../testing/identity-factory';
import { sqlRows } from '../database/sql';
import { createTestApp, type TestApp } from '../testing/test-app';
import { MailService, retryDelayMs } from './mail.service';

const finalise = (s: LetterScenario, extra: Record<string, string> = {}) =>
  s.tablet.pushOk('letter', s.letterId, {
    status: 'final',
    finalisedAt: '2026-12-01T15:20:00.000Z',
    finalisedBy: s.tablet.person.id,
    deliveryState: 'queued',
    ...extra,
  });

describe('mail: final letters by e-mail through the outbox', () => {
  let t: TestApp;
  let smtp: FakeSmtp;
  let mail: MailService;

  beforeAll(async () => {
    smtp = await startFakeSmtp();
    t = await createTestApp({ env: { SMTP_PORT: String(smtp.port), SMTP_HOST: '127.0.0.1' } });
    mail = t.app.get(MailService);
  });
  afterAll(async () => {
    await t.close();
    await smtp.close();
  });
  beforeEach(() => {
    smtp.mails.length = 0;
    smtp.refuseWith = null;
  });

  const letterFields = async (id: string) =>
    (await t.app.get(RecordAccess).get('letter', id))!.fields as Partial<RecordFields<'letter'>>;

  it('sends a final letter to the referrer with the PDF attached and writes sent back to the letter', async () => {
    const s = await pushLetterScenario(t);
    await finalise(s);
    const summary = await mail.runOnce();
    expect(summary).toMatchObject({ enqueued: 1, sent: 1 });
    expect(smtp.mails).toHaveLength(1);
    const [received] = smtp.mails;
    expect(received!.to).toEqual(['a.whitcombe@practice.example']);
    expect(received!.raw).toMatch(/Subject: Harbourside Eye Clinic: Orthoptic assessment of/);
    const pdf = pdfAttachmentOf(received!.raw);
    expect(pdf?.filename).toMatch(/^letter-HB-20417-\d{4}-\d{2}-\d{2}\.pdf$/);
    const text = (await pdfText(new Uint8Array(pdf!.bytes))).all.replace(/\s+/g, ' ');
    expect(text).toContain('Tamsin Orrery');
    expect(text).toContain('exo 8.0° (14.1Δ)');
    expect(text).toContain('Previous visit (18 Aug 2026)');
    expect(text).toContain('licensed practice');

    const letter = await letterFields(s.letterId);
    expect(letter).toMatchObject({
      deliveryState: 'sent',
      deliveryAttempts: 1,
      deliveryError: null,
    });
    expect(letter.sentAt).toBe(t.clock.now().toISOString());

    // The tablet sees the outcome on its next pull.
    const pulled = await request(t.app.getHttpServer())
      .get('/api/sync/pull')
      .query({ after: 0 })
      .set('authorization', `Bearer ${s.tablet.token}`)
      .expect(200);
    const record = (
      pulled.body.records as {
        id: string;
        fields: Record<string, unknown>;
        stamps: Record<string, { device: string }>;
      }[]
    ).find((r) => r.id === s.letterId);
    expect(record?.fields.deliveryState).toBe('sent');
    expect(record?.stamps.deliveryState?.device).toBe('server');

    // Another pass sends nothing twice.
    expect(await mail.runOnce()).toMatchObject({ enqueued: 0, sent: 0 });
    expect(smtp.mails).toHaveLength(1);
  });

  it('mails the letter the tablet shows: the shared model of the same records, and its PDF text', async () => {
    // The same invented records the tablet's letter test charts (shared letter-records fixture),
    // with rival Section records and an earlier app's Addendum kept as a plan beside the real ones.
    const site = await createSite(t, {
      name: exampleLetterInput.clinic.name,
      address: exampleLetterInput.clinic.address,
    });
    const tablet = await tabletAt(t, 'orthoptist', [site.id]);
    const fixture = exampleLetterRecords({
      siteId: site.id,
      patientId: uuidv7(),
      visitIds: [uuidv7(), uuidv7(), uuidv7()],
      letterId: uuidv7(),
      clinicianId: tablet.person.id,
      newId: uuidv7,
    });
    await tablet.pushAll(
      fixture.all.map((record) => ({
        collection: record.collection,
        recordId: record.id,
        fields: {
          ...(record.fields as Record<string, JsonValue>),
          ...(record.collection === 'letter' ? { deliveryState: 'queued' } : {}),
        },
      })),
    );
    const model = letterLayoutOf(fixture.records, {
      clinic: exampleLetterInput.clinic,
      clinician: exampleLetterInput.clinician,
      today: t.clock.now().toISOString().slice(0, 10),
    });
    const { layout } = await t.app.get(LetterSourceService).load(fixture.records.letter.id);
    expect(layout).toEqual(model);

    expect(await mail.runOnce()).toMatchObject({ sent: 1 });
    const pdf = pdfAttachmentOf(smtp.mails[0]!.raw);
    const mailed = await pdfText(new Uint8Array(pdf!.bytes));
    const ofModel = await pdfText(await renderLetterPdf(model, letterFonts()));
    expect(mailed.all).toBe(ofModel.all);
    expect(mailed.all).toContain('Harbourside Eye Clinic');
    expect(mailed.all).not.toMatch(/exo (30|25|40)\.0°/);
  });

  it('keeps a mail queued when the relay refuses for now, and retries it after the back-off', async () => {
    const s = await pushLetterScenario(t);
    await finalise(s);
    smtp.refuseWith = 451;
    expect(await mail.runOnce()).toMatchObject({ enqueued: 1, sent: 0, retried: 1 });
    let letter = await letterFields(s.letterId);
    expect(letter.deliveryState).toBe('queued');
    expect(letter.deliveryAttempts).toBe(1);
    expect(letter.deliveryError).toMatch(/^will retry: the mail relay answered 451/);
    const [row] = await sqlRows<{ status: string; next_attempt_at: Date }>(
      t.em(),
      `select "status", "next_attempt_at" from "mail_outbox" where "letter_id" = ?::uuid`,
      [s.letterId],
    );
    expect(row?.status).toBe('queued');
    expect(new Date(row!.next_attempt_at).getTime() - t.clock.now().getTime()).toBe(
      retryDelayMs(1),
    );

    // Not yet due: nothing is tried.
    smtp.refuseWith = null;
    expect(await mail.runOnce()).toMatchObject({ sent: 0, retried: 0 });
    t.clock.advance(retryDelayMs(1));
    expect(await mail.runOnce()).toMatchObject({ sent: 1 });
    letter = await letterFields(s.letterId);
    expect(letter).toMatchObject({
      deliveryState: 'sent',
      deliveryAttempts: 2,
      deliveryError: null,
    });
    expect(smtp.mails).toHaveLength(1);
  });

  it('keeps a mail queued while the relay cannot be reached at all', async () => {
    const down = await createTestApp({ env: { SMTP_PORT: '1', SMTP_HOST: '127.0.0.1' } });
    try {
      const s = await pushLetterScenario(down);
      await finalise(s);
      const summary = await down.app.get(MailService).runOnce();
      expect(summary).toMatchObject({ enqueued: 1, retried: 1, sent: 0 });
      const letter = (await down.app.get(RecordAccess).get('letter', s.letterId))!.fields;
      expect(letter.deliveryState).toBe('queued');
      expect(letter.deliveryError).toMatch(/could not be reached/);
    } finally {
      await down.close();
    }
  });

  it('marks the letter failed with the reason when the relay refuses for good', async () => {
    const s = await pushLetterScenario(t);
    await finalise(s);
    smtp.refuseWith = 550;
    expect(await mail.runOnce()).toMatchObject({ failed: 1 });
    const letter = await letterFields(s.letterId);
    expect(letter.deliveryState).toBe('failed');
    expect(letter.deliveryError).toMatch(/^referrer copy: the mail relay answered 550/);
  });

  it('survives a restart: a queued mail left by one process is sent by the next', async () => {
    const s = await pushLetterScenario(t);
    await finalise(s);
    smtp.refuseWith = 451;
    await mail.runOnce();
    // A second application on the same database stands in for the restarted process.
    const { loadConfig } = await import('../config/app-config');
    const { createApp } = await import('../app.factory');
    const again = await createApp(
      loadConfig({ NODE_ENV: 'test', DATABASE_URL: t.db.url, SMTP_PORT: String(smtp.port) }),
      {
        clock: t.clock,
        logger: false,
      },
    );
    await again.init();
    try {
      smtp.refuseWith = null;
      t.clock.advance(retryDelayMs(1));
      expect(await again.get(MailService).runOnce()).toMatchObject({ sent: 1 });
      expect(smtp.mails.map((m) => m.to[0])).toEqual(['a.whitcombe@practice.example']);
    } finally {
      await again.close();
    }
  });

  it('lets two workers share the outbox without sending a mail twice', async () => {
    const s1 = await pushLetterScenario(t);
    const s2 = await pushLetterScenario(t);
    await finalise(s1);
    await finalise(s2);
    await mail.enqueueRequests({ enqueued: 0, refused: 0, sent: 0, retried: 0, failed: 0 });
    const results = await Promise.all([mail.runOnce(), mail.runOnce(), mail.runOnce()]);
    expect(results.reduce((n, r) => n + r.sent, 0)).toBe(2);
    expect(smtp.mails).toHaveLength(2);
  });

  it('refuses to mail an address that is not on the record, and says so on the letter', async () => {
    const s = await pushLetterScenario(t);
    await finalise(s, { recipientEmail: 'someone@elsewhere.example' });
    expect(await mail.runOnce()).toMatchObject({ refused: 1, sent: 0 });
    const letter = await letterFields(s.letterId);
    expect(letter.deliveryState).toBe('failed');
    expect(letter.deliveryError).toMatch(
      /recipientEmail someone@elsewhere.example is not the referrer's or the patient's address on file/,
    );
    expect(smtp.mails).toHaveLength(0);
  });

  it('refuses when the referrer has no e-mail address on file', async () => {
    const s = await pushLetterScenario(t, { referrerEmail: null });
    await finalise(s);
    expect(await mail.runOnce()).toMatchObject({ refused: 1 });
    expect((await letterFields(s.letterId)).deliveryError).toMatch(/no referrer e-mail address/);
  });

  it('sends nothing for a send request made by an admin account', async () => {
    const s = await pushLetterScenario(t);
    await finalise(s);
    // Re-stamp the request as an admin's: admins have no clinical push rights, so write it as if
    // one had slipped through, to prove the mailer checks the requester itself.
    const admin = await createUser(t, { role: 'admin', siteIds: [] });
    await sqlRows(
      t.em(),
      `update "sync_record" set "stamps" = jsonb_set("stamps", '{deliveryState,by}', to_jsonb(?::text)) where "id" = ?::uuid`,
      [admin.id, s.letterId],
    );
    expect(await mail.runOnce()).toMatchObject({ refused: 1, sent: 0 });
    expect((await letterFields(s.letterId)).deliveryError).toMatch(
      /admin account cannot send clinical letters/,
    );
    expect(smtp.mails).toHaveLength(0);
  });

  it('sends a timed request with a copy to the patient address on file', async () => {
    const s = await pushLetterScenario(t);
    await s.tablet.pushOk('patient', s.patientId, { email: 'orrery.family@home.example' }, 0);
    await s.tablet.pushOk('letter', s.letterId, {
      status: 'final',
      finalisedAt: '2026-12-01T15:20:00.000Z',
      finalisedBy: s.tablet.person.id,
      sendRequestedAt: '2026-12-01T15:21:00.000Z',
      copyToPatient: true,
    });
    expect(await mail.runOnce()).toMatchObject({ enqueued: 1, sent: 2 });
    expect(smtp.mails.map((m) => m.to[0]).sort()).toEqual([
      'a.whitcombe@practice.example',
      'orrery.family@home.example',
    ]);
    expect(smtp.mails.every((m) => pdfAttachmentOf(m.raw) !== null)).toBe(true);
    expect((await letterFields(s.letterId)).deliveryState).toBe('sent');
  });

  it('does not send a draft', async () => {
    const s = await pushLetterScenario(t);
    await mail.runOnce();
    const requests = await sqlRows(
      t.em(),
      `select 1 from "mail_request" where "letter_id" = ?::uuid`,
      [s.letterId],
    );
    expect(requests).toEqual([]);
    expect((await letterFields(s.letterId)).deliveryState).toBeUndefined();
  });
});
