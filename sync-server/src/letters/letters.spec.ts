import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RecordAccess } from './record-access';
import { letterPushProblem } from './letter-push-rule';
import { pdfText } from './pdf-text.testing';
import { pushLetterScenario, tabletAt, type LetterScenario } from './testing/letters-test-kit';
import { createTestApp, type TestApp } from '../testing/test-app';

describe('letters on the server', () => {
  let t: TestApp;
  let s: LetterScenario;

  beforeAll(async () => {
    t = await createTestApp();
    s = await pushLetterScenario(t);
  });
  afterAll(async () => {
    await t.close();
  });

  it('renders the letter PDF from the synced records for a tablet in the site', async () => {
    const res = await request(t.app.getHttpServer())
      .get(`/api/letters/${s.letterId}/pdf`)
      .set('authorization', `Bearer ${s.tablet.token}`)
      .buffer(true)
      .parse((r, done) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => done(null, Buffer.concat(chunks)));
      })
      .expect(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const text = (await pdfText(new Uint8Array(res.body as Buffer))).all.replace(/\s+/g, ' ');
    expect(text).toContain('Harbourside Eye Clinic');
    expect(text).toContain('Wren Ashdown');
    expect(text).toContain('Objective angle (amblyoscope) exo 8.0° (14.1Δ) exo 11.0° (19.4Δ)');
    expect(text).toContain('Draft — not yet finalised');
  });

  it('refuses the letter PDF outside the letter site', async () => {
    const stranger = await tabletAt(t, 'orthoptist', [s.otherSiteId]);
    await request(t.app.getHttpServer())
      .get(`/api/letters/${s.letterId}/pdf`)
      .set('authorization', `Bearer ${stranger.token}`)
      .expect(404);
  });

  it('keeps a final letter unchanged: edits and deletion are rejected, a send request is accepted', async () => {
    const own = await pushLetterScenario(t);
    const version = await own.tablet.pushOk('letter', own.letterId, {
      status: 'final',
      finalisedAt: '2026-12-01T15:20:00.000Z',
      finalisedBy: own.tablet.person.id,
      opening: 'Dear Dr Whitcombe,',
    });
    const edit = await own.tablet.push(
      'letter',
      own.letterId,
      { opening: 'Changed after finalising' },
      version,
    );
    expect(edit.results[0]).toMatchObject({
      status: 'rejected',
      error: expect.stringMatching(/this letter is final and can no longer be changed/),
    });
    const back = await own.tablet.push('letter', own.letterId, { status: 'draft' }, version);
    expect(back.results[0]?.status).toBe('rejected');
    const removed = await own.tablet.push('letter', own.letterId, {}, version, { deleted: true });
    expect(removed.results[0]?.status).toBe('rejected');
    expect((await t.app.get(RecordAccess).get('letter', own.letterId))?.deleted).toBe(false);
    const fields = (await t.app.get(RecordAccess).get('letter', own.letterId))!.fields;
    expect(fields).toMatchObject({ status: 'final', opening: 'Dear Dr Whitcombe,' });

    const send = await own.tablet.push(
      'letter',
      own.letterId,
      { deliveryState: 'queued' },
      version,
    );
    expect(send.results[0]?.status).not.toBe('rejected');
    expect((await t.app.get(RecordAccess).get('letter', own.letterId))!.fields.deliveryState).toBe(
      'queued',
    );
  });

  it('names the field when the push rule refuses a change to a final letter', () => {
    const final = {
      deleted: false,
      fields: { status: 'final', kind: 'referrer', finalisedAt: '2026-12-01T15:20:00.000Z' },
    };
    expect(letterPushProblem(final, { planText: 'x' })).toBe(
      'fields.planText: planText: this letter is final and can no longer be changed; write a new letter instead',
    );
    expect(letterPushProblem(final, {}, { deleting: true })).toMatch(
      /^deleted: this letter is final/,
    );
    expect(letterPushProblem(final, { deliveryState: 'queued' })).toBeNull();
  });
});
