// A write refused for quota (fake-indexeddb made to throw the browser's QuotaExceededError):
// the edit is not written, says so in words, and every Outbox entry stays.
import { afterEach, describe, expect, it, vi } from 'vitest';
import { FuselightDb } from './db';
import { OutboxRepository } from './outbox-repository';
import { RecordsRepository } from './records-repository';
import {
  STORAGE_FULL_WORDS,
  StorageFullError,
  isQuotaExceeded,
  wordStorageError,
} from './storage-full';
import { refuseWritesForQuota } from './quota-refusal.fixture';
import { CLINICIAN_ID, DEVICE_ID, patientFields } from './test-fixtures';

const dbs: FuselightDb[] = [];
afterEach(async () => {
  vi.restoreAllMocks();
  for (const db of dbs.splice(0)) {
    db.close();
    await db.delete();
  }
});

const ctx = () => ({ authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: Date.now() });

describe('a write refused because the tablet’s storage is full', () => {
  it('writes neither the record nor its Outbox entry, keeps every earlier entry and says why', async () => {
    const db = new FuselightDb(`quota-${crypto.randomUUID()}`);
    dbs.push(db);
    const records = new RecordsRepository(db);
    const outbox = new OutboxRepository(db);
    const firstId = await records.create('patient', patientFields(), ctx());
    // Sent once (the reply lost): later edits get entries of their own, never coalesced into it.
    const [created] = await outbox.listEntries();
    await db.outbox.update(created!.changeId, { attempts: 1 });
    await records.update('patient', firstId, { givenName: 'Tamsin' }, ctx());
    const before = await outbox.listEntries();
    expect(before).toHaveLength(2);

    refuseWritesForQuota('records');
    const refused = records.update('patient', firstId, { givenName: 'Odalys' }, ctx());
    await expect(refused).rejects.toBeInstanceOf(StorageFullError);
    await expect(refused).rejects.toThrow(STORAGE_FULL_WORDS);

    expect(await outbox.listEntries()).toEqual(before);
    expect((await records.get('patient', firstId))!.fields.givenName).toBe('Tamsin');

    // Space again: the same edit goes through, into the entry not yet sent.
    await records.update('patient', firstId, { givenName: 'Odalys' }, ctx());
    const after = await outbox.listEntries();
    expect(after[0]).toEqual(before[0]);
    expect(after).toHaveLength(2);
    expect(after[1]!.fields).toEqual({ givenName: 'Odalys' });
  });

  it('refuses an Outbox write for quota the same way, the record left as it was', async () => {
    const db = new FuselightDb(`quota-${crypto.randomUUID()}`);
    dbs.push(db);
    const records = new RecordsRepository(db);
    const outbox = new OutboxRepository(db);
    const id = await records.create('patient', patientFields(), ctx());
    const before = await outbox.listEntries();
    refuseWritesForQuota('outbox');
    await expect(records.update('patient', id, { familyName: 'Quarrie' }, ctx())).rejects.toThrow(
      STORAGE_FULL_WORDS,
    );
    expect(await outbox.listEntries()).toEqual(before);
    expect((await records.get('patient', id))!.fields.familyName).toBe(patientFields().familyName);
  });

  it('recognises the quota error however it is wrapped, and leaves other errors as they are', () => {
    const quota = new DOMException('full', 'QuotaExceededError');
    expect(isQuotaExceeded(quota)).toBe(true);
    expect(isQuotaExceeded({ name: 'AbortError', inner: quota })).toBe(true);
    expect(isQuotaExceeded(new Error('outer', { cause: quota }))).toBe(true);
    const other = new Error('Constraint failed');
    expect(isQuotaExceeded(other)).toBe(false);
    expect(wordStorageError(other)).toBe(other);
    expect((wordStorageError(quota) as Error).message).toBe(STORAGE_FULL_WORDS);
  });
});
