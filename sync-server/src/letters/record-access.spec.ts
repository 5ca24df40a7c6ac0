// The server's own writes into letters (delivery state, attempts) follow the merge rule like any
// other write: a write of a field whose dispute is open joins that dispute as a candidate, and a
// write of another field leaves the dispute as it was.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SERVER_DEVICE, type StoredCandidate } from '../records/stored-record';
import { createTestApp, type TestApp } from '../testing/test-app';
import { RecordAccess } from './record-access';
import { pushLetterScenario, tabletAt } from './testing/letters-test-kit';

describe('RecordAccess.writeAsServer', () => {
  let t: TestApp;

  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  async function disputesOf(recordId: string) {
    return t
      .em()
      .getConnection()
      .execute<{ field: string; status: string; candidates: StoredCandidate[] }[]>(
        `select "field", "status", "candidates" from "sync_conflict" where "record_id" = ? order by "opened_at", "id"`,
        [recordId],
      );
  }

  /**
   * A final letter whose delivery state is disputed: the mailer marked it sent while a second
   * tablet, which had not seen the first tablet's send request nor the mailer's answer, sent its
   * own request from the version before them.
   */
  async function disputedLetter() {
    const s = await pushLetterScenario(t);
    const draft = (await t.app.get(RecordAccess).get('letter', s.letterId))!.version;
    const final = await s.tablet.pushOk(
      'letter',
      s.letterId,
      { status: 'final', finalisedAt: '2026-12-01T15:20:00.000Z', finalisedBy: s.tablet.person.id },
      draft,
    );
    const sender = s.tablet.person.id;
    await s.tablet.pushOk('letter', s.letterId, { deliveryState: 'queued' }, final);
    t.clock.advance(1000);
    await t.app.get(RecordAccess).writeAsServer(
      'letter',
      s.letterId,
      { deliveryState: 'sent' },
      {
        actorId: sender,
        kind: 'letter.mail_sent',
      },
    );
    const other = await tabletAt(t, 'orthoptist', [s.siteId]);
    const late = await other.push('letter', s.letterId, { deliveryState: 'queued' }, final);
    expect(late.results[0], JSON.stringify(late.results[0])).toMatchObject({
      conflicts: ['deliveryState'],
    });
    t.clock.advance(1000);
    return { s, sender };
  }

  it('joins an open dispute of the field it writes as one more candidate', async () => {
    const { s, sender } = await disputedLetter();
    const [before] = await disputesOf(s.letterId);
    expect(before?.candidates).toHaveLength(2);

    const written = await t.app.get(RecordAccess).writeAsServer(
      'letter',
      s.letterId,
      { deliveryState: 'failed' },
      {
        actorId: sender,
        kind: 'letter.mail_failed',
      },
    );
    expect(written).toBe(true);

    const letter = (await t.app.get(RecordAccess).get('letter', s.letterId))!;
    expect(letter.fields.deliveryState).toBe('failed');
    const disputes = await disputesOf(s.letterId);
    expect(disputes).toHaveLength(1);
    expect(disputes[0]).toMatchObject({ field: 'deliveryState', status: 'open' });
    expect(disputes[0]!.candidates).toHaveLength(3);
    expect(disputes[0]!.candidates[2]).toEqual({
      value: 'failed',
      hlc: letter.stamps.deliveryState!.hlc,
      by: sender,
      device: SERVER_DEVICE,
      version: letter.version,
      at: letter.stamps.deliveryState!.at,
    });
  });

  it('leaves a dispute of another field as it was', async () => {
    const { s, sender } = await disputedLetter();
    await t.app.get(RecordAccess).writeAsServer(
      'letter',
      s.letterId,
      { deliveryAttempts: 1 },
      {
        actorId: sender,
        kind: 'letter.attempted',
      },
    );
    const disputes = await disputesOf(s.letterId);
    expect(disputes).toHaveLength(1);
    expect(disputes[0]!.candidates).toHaveLength(2);
  });
});
