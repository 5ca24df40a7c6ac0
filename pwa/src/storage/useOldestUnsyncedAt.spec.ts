// The storage warning's age of unsynced edits, read from the Outbox's createdAt index only.
import { afterEach, describe, expect, it } from 'vitest';
import { FuselightDb } from '../data/db';
import { RecordsRepository } from '../data/records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields } from '../data/test-fixtures';
import { oldestOutboxCreatedAt } from './useOldestUnsyncedAt';

const dbs: FuselightDb[] = [];
afterEach(async () => {
  for (const db of dbs.splice(0)) {
    db.close();
    await db.delete();
  }
});

describe('the oldest unsynced edit', () => {
  it('is null with an empty Outbox, then the earliest entry’s time whatever order they were written in', async () => {
    const db = new FuselightDb(`oldest-${crypto.randomUUID()}`);
    dbs.push(db);
    expect(await oldestOutboxCreatedAt(db)).toBeNull();
    const records = new RecordsRepository(db);
    const at = (nowMs: number) => ({ authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs });
    // Edits of several patients, at times out of order (a tablet clock moved back, say).
    await records.create('patient', patientFields(), at(1_764_000_500_000));
    await records.create('patient', patientFields(), at(1_764_000_100_000));
    await records.create('patient', patientFields(), at(1_764_000_900_000));
    expect(await db.outbox.count()).toBe(3);
    expect(await oldestOutboxCreatedAt(db)).toBe(1_764_000_100_000);
  });
});
