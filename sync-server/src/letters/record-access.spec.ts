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

  /** Two tablets set the letter's delivery state to different values from the same version. */
  async function disputedLetter() {
    const s = await pushLetterScenario(t);
    const version = (await t.app.get(RecordAccess).get('letter', s.letterId))!.version;
    const other = await tabletAt(t, 'orthoptist', [s.siteId]);
    await s.tablet.pushOk('letter', s.letterId, { deliveryState: 'queued' }, version);
    const second = await other.push('letter', s.letterId, { deliveryState: 'notSent' }, version);
    expect(second.results[0]).toMatchObject({ conflicts: ['deliveryState'] });
    return { s, sender: s.tablet.person.id };
  }

  it('joins an open dispute of the field it writes as one more candidate', async () => {
    const { s, sender } = await disputedLetter();
    const [before] = await disputesOf(s.letterId);
    expect(before?.candidates).toHaveLength(2);

    const written = await t.app
      .get(RecordAccess)
      .writeAsServer('letter', s.letterId, { deliveryState: 'sent' }, {
        actorId: sender,
        kind: 'letter.sent',
      });
    expect(written).toBe(true);

    const letter = (await t.app.get(RecordAccess).get('letter', s.letterId))!;
    expect(letter.fields.deliveryState).toBe('sent');
    const disputes = await disputesOf(s.letterId);
    expect(disputes).toHaveLength(1);
    expect(disputes[0]).toMatchObject({ field: 'deliveryState', status: 'open' });
    expect(disputes[0]!.candidates).toHaveLength(3);
    expect(disputes[0]!.candidates[2]).toEqual({
      value: 'sent',
      hlc: letter.stamps.deliveryState!.hlc,
      by: sender,
      device: SERVER_DEVICE,
      version: letter.version,
      at: letter.stamps.deliveryState!.at,
    });
  });

  it('leaves a dispute of another field as it was', async () => {
    const { s, sender } = await disputedLetter();
    await t.app
      .get(RecordAccess)
      .writeAsServer('letter', s.letterId, { deliveryAttempts: 1 }, {
        actorId: sender,
        kind: 'letter.attempted',
      });
    const disputes = await disputesOf(s.letterId);
    expect(disputes).toHaveLength(1);
    expect(disputes[0]!.candidates).toHaveLength(2);
  });
});
