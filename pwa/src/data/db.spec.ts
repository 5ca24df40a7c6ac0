import { afterEach, describe, expect, it } from 'vitest';
import { FuselightDb } from './db';

let db: FuselightDb | null = null;

afterEach(async () => {
  await db?.delete();
  db = null;
});

describe('the tablet database', () => {
  it('opens on fake-indexeddb with its versioned schema', async () => {
    db = new FuselightDb(`test-${crypto.randomUUID()}`);
    await db.open();
    expect(db.verno).toBe(1);
    expect(db.tables.map((t) => t.name).sort()).toEqual(['meta', 'outbox', 'records']);
  });

  it('writes a record and its outbox entry in one transaction, or neither', async () => {
    db = new FuselightDb(`test-${crypto.randomUUID()}`);
    const id = crypto.randomUUID();
    await expect(
      db.transaction('rw', db.records, db.outbox, async () => {
        await db!.records.put({
          collection: 'patient',
          id,
          version: 0,
          deleted: false,
          fields: { familyName: 'Ardent' },
          conflicts: [],
          pendingFields: ['familyName'],
          updatedAt: 1,
        });
        throw new Error('the outbox write failed');
      }),
    ).rejects.toThrow('the outbox write failed');
    expect(await db.records.count()).toBe(0);
  });
});
