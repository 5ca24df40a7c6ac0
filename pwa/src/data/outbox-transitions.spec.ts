// The Outbox transitions the repositories' own specs do not reach: claiming for sending, each
// push result, a pull arriving while fields are pending, and the discard of a rejected entry
// whose record has an acknowledged earlier edit.
import type { PulledRecord } from '@fuselight/shared';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { FuselightDb, TOMBSTONE, type StoredRecord } from './db';
import {
  applyPushResults,
  claimForSending,
  discardRejected,
  mergePulled,
  OutboxEntryStateError,
  restoreDiscarded,
} from './outbox-transitions';
import { RecordsRepository, type EditContext } from './records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields } from './test-fixtures';

let db: FuselightDb;
let records: RecordsRepository;
let now = 1_764_576_000_000;

function ctx(): EditContext {
  now += 1000;
  return { authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: now };
}

beforeEach(() => {
  db = new FuselightDb(`transitions-${crypto.randomUUID()}`);
  records = new RecordsRepository(db);
});

afterEach(async () => {
  db.close();
  await db.delete();
});

async function entries() {
  return db.outbox.orderBy('seq').toArray();
}

async function stored(id: string): Promise<StoredRecord> {
  const record = await db.records.get(['patient', id] as unknown as string);
  if (!record) throw new Error(`no record ${id}`);
  return record;
}

/** A patient the server holds at version 3 (as after a pull), nothing pending. */
async function serverPatient(): Promise<string> {
  const id = '0190c6a0-0000-7000-8000-0000000c0001';
  await db.records.put({
    collection: 'patient',
    id,
    version: 3,
    deleted: false,
    fields: patientFields(),
    conflicts: [],
    pendingFields: [],
    serverFields: {},
    updatedAt: now,
  });
  return id;
}

function pulled(id: string, version: number, fields: Record<string, unknown>): PulledRecord {
  return {
    collection: 'patient',
    id,
    version,
    deleted: false,
    fields,
    conflicts: [],
    stamps: {},
  } as unknown as PulledRecord;
}

describe('claiming entries for sending', () => {
  it('counts the attempt, skips entries gone or rejected, and stops later edits coalescing into it', async () => {
    const id = await serverPatient();
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    const [first] = await entries();
    await db.outbox.put({ ...first!, changeId: 'rejected-one', seq: 99, state: 'rejected' });

    const claimed = await claimForSending(db, [first!.changeId, 'rejected-one', 'missing']);
    expect(claimed.map((entry) => entry.changeId)).toEqual([first!.changeId]);
    expect((await db.outbox.get(first!.changeId))!.attempts).toBe(1);
    expect((await db.outbox.get('rejected-one'))!.attempts).toBe(0);

    await records.update('patient', id, { givenName: 'Bea' }, ctx());
    const after = (await entries()).filter((entry) => entry.state === 'pending');
    expect(after).toHaveLength(2);
    expect(after[0]!.fields).toEqual({ givenName: 'Ada' });
    expect(after[1]!.fields).toEqual({ givenName: 'Bea' });
  });
});

describe('applying push results', () => {
  it('accepted and applied: deletes the entry, clears its marks and adopts the version', async () => {
    const id = await serverPatient();
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    const sent = await claimForSending(
      db,
      (await entries()).map((entry) => entry.changeId),
    );
    const summary = await applyPushResults(
      db,
      sent,
      [{ changeId: sent[0]!.changeId, status: 'applied', version: 4, conflicts: [] }],
      now,
    );
    expect(summary).toEqual({ accepted: 1, rejected: 0, collections: ['patient'] });
    expect(await entries()).toEqual([]);
    const record = await stored(id);
    expect(record.pendingFields).toEqual([]);
    expect(record.serverFields).toEqual({});
    expect(record.version).toBe(4);
    expect(record.fields.givenName).toBe('Ada');
  });

  it('accepted while a later entry holds the field: the mark stays, the server value is the sent one', async () => {
    const id = await serverPatient();
    await records.update('patient', id, { givenName: 'Ada', familyName: 'Lovel' }, ctx());
    const sent = await claimForSending(
      db,
      (await entries()).map((entry) => entry.changeId),
    );
    await records.update('patient', id, { givenName: 'Bea' }, ctx());
    await applyPushResults(
      db,
      sent,
      [{ changeId: sent[0]!.changeId, status: 'merged', version: 5, conflicts: ['familyName'] }],
      now,
    );
    const left = await entries();
    expect(left).toHaveLength(1);
    expect(left[0]!.fields).toEqual({ givenName: 'Bea' });
    const record = await stored(id);
    expect(record.pendingFields).toEqual(['givenName']);
    expect(record.serverFields).toEqual({ givenName: 'Ada' });
    expect(record.fields.givenName).toBe('Bea');
    // "merged": the other devices' values come with the next pull, and the version with them.
    expect(record.version).toBe(3);
    expect(record.conflicts).toEqual(['familyName']);
  });

  it('rejected: keeps the entry and its marks, with the server’s words', async () => {
    const id = await serverPatient();
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    const sent = await claimForSending(
      db,
      (await entries()).map((entry) => entry.changeId),
    );
    const summary = await applyPushResults(
      db,
      sent,
      [{ changeId: sent[0]!.changeId, status: 'rejected', error: 'givenName: too short' }],
      now,
    );
    expect(summary.rejected).toBe(1);
    const [entry] = await entries();
    expect(entry).toMatchObject({ state: 'rejected', error: 'givenName: too short' });
    const record = await stored(id);
    expect(record.pendingFields).toEqual(['givenName']);
    expect(record.serverFields).toEqual({ givenName: 'Amara' });
  });

  it('ignores a result for an entry it did not send', async () => {
    const id = await serverPatient();
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    const [entry] = await entries();
    const summary = await applyPushResults(
      db,
      [],
      [{ changeId: entry!.changeId, status: 'applied', version: 4, conflicts: [] }],
      now,
    );
    expect(summary.accepted).toBe(0);
    expect(await entries()).toHaveLength(1);
  });
});

describe('a pull while fields are pending', () => {
  it('keeps the local value and puts the pulled one aside, the tombstone as well', async () => {
    const id = await serverPatient();
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    await records.remove('patient', id, ctx());
    const local = await stored(id);
    const merged = mergePulled(
      local,
      pulled(id, 6, patientFields({ givenName: 'Zoe', familyName: 'Quill' })),
      now,
    )!;
    expect(merged.fields.givenName).toBe('Ada');
    expect(merged.fields.familyName).toBe('Quill');
    expect(merged.deleted).toBe(true);
    expect(merged.serverFields).toEqual({ givenName: 'Zoe', [TOMBSTONE]: false });
    expect(merged.pendingFields.sort()).toEqual(['deleted', 'givenName']);
    expect(merged.version).toBe(6);
  });

  it('takes nothing older than what the tablet holds, and everything when nothing is pending', async () => {
    const id = await serverPatient();
    const local = await stored(id);
    expect(mergePulled(local, pulled(id, 2, patientFields()), now)).toBeNull();
    const merged = mergePulled(local, pulled(id, 4, patientFields({ givenName: 'Zoe' })), now)!;
    expect(merged.fields.givenName).toBe('Zoe');
    expect(merged.pendingFields).toEqual([]);
  });
});

describe('discarding a rejected entry', () => {
  it('puts back the value the server acknowledged for an earlier entry, and the undo brings the entry back', async () => {
    const id = await serverPatient();
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    const firstSent = await claimForSending(
      db,
      (await entries()).map((entry) => entry.changeId),
    );
    await records.update('patient', id, { givenName: 'B' }, ctx());
    await applyPushResults(
      db,
      firstSent,
      [{ changeId: firstSent[0]!.changeId, status: 'merged', version: 4, conflicts: [] }],
      now,
    );
    const secondSent = await claimForSending(
      db,
      (await entries()).map((entry) => entry.changeId),
    );
    await applyPushResults(
      db,
      secondSent,
      [{ changeId: secondSent[0]!.changeId, status: 'rejected', error: 'no' }],
      now,
    );

    await expect(discardRejected(db, 'missing')).rejects.toBeInstanceOf(OutboxEntryStateError);
    const entry = await discardRejected(db, secondSent[0]!.changeId);
    expect(await entries()).toEqual([]);
    let record = await stored(id);
    expect(record.fields.givenName).toBe('Ada');
    expect(record.pendingFields).toEqual([]);
    expect(record.serverFields).toEqual({});

    await restoreDiscarded(db, entry);
    expect((await entries()).map((e) => e.changeId)).toEqual([entry.changeId]);
    record = await stored(id);
    expect(record.fields.givenName).toBe('B');
    expect(record.pendingFields).toEqual(['givenName']);
    expect(record.serverFields).toEqual({ givenName: 'Ada' });
  });

  it('refuses to discard an entry still waiting to be sent', async () => {
    const id = await serverPatient();
    await records.update('patient', id, { givenName: 'Ada' }, ctx());
    const [entry] = await entries();
    await expect(discardRejected(db, entry!.changeId)).rejects.toThrow(
      'Only an edit the server refused can be discarded',
    );
    expect(await entries()).toHaveLength(1);
  });
});
