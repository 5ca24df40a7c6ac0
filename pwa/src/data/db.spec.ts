import Dexie from 'dexie';
import { afterEach, describe, expect, it } from 'vitest';
import { DEXIE_SCHEMA_VERSION, FuselightDb } from './db';
import { RecordsRepository } from './records-repository';

const opened: Dexie[] = [];

afterEach(async () => {
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

function fresh(): FuselightDb {
  const db = new FuselightDb(`test-${crypto.randomUUID()}`);
  opened.push(db);
  return db;
}

describe('the tablet database', () => {
  it('opens on fake-indexeddb with its versioned schema', async () => {
    const db = fresh();
    await db.open();
    expect(db.verno).toBe(DEXIE_SCHEMA_VERSION);
    expect(db.tables.map((t) => t.name).sort()).toEqual(['keySlots', 'meta', 'outbox', 'records']);
  });

  it('writes a record and its outbox entry in one transaction, or neither', async () => {
    const db = fresh();
    const id = crypto.randomUUID();
    await expect(
      db.transaction('rw', db.records, db.outbox, async () => {
        await db.records.put({
          collection: 'patient',
          id,
          version: 0,
          deleted: false,
          fields: { familyName: 'Ardent' },
          conflicts: [],
          pendingFields: ['familyName'],
          serverFields: {},
          updatedAt: 1,
        });
        throw new Error('the outbox write failed');
      }),
    ).rejects.toThrow('the outbox write failed');
    expect(await db.records.count()).toBe(0);
  });

  it('upgrades a version 1 database straight to the current version and keeps every outbox entry, in creation order', async () => {
    const name = `test-v1-${crypto.randomUUID()}`;
    // The schema exactly as version 1 shipped it.
    const v1 = new Dexie(name);
    v1.version(1).stores({
      records: '[collection+id], collection, id, version, updatedAt',
      outbox: 'changeId, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
    });
    const patientId = '0190c6a0-0000-7000-8000-00000000b001';
    await v1.table('records').put({
      collection: 'patient',
      id: patientId,
      version: 0,
      deleted: false,
      fields: {
        givenName: 'Amara',
        familyName: 'Okafor',
        clinicNumber: 'FL-1',
        dateOfBirth: '2016-04-09',
      },
      conflicts: [],
      pendingFields: ['givenName', 'familyName'],
      updatedAt: 5,
    });
    const entries = [3, 1, 2].map((n) => ({
      changeId: `0190c6a0-0000-7000-8000-0000000e000${n}`,
      collection: 'patient',
      recordId: patientId,
      baseVersion: 0,
      hlc: `000000000000${n}00-00000-device-one`,
      fields: { familyName: `Name ${n}` },
      deleted: n === 2,
      authorId: 'author',
      createdAt: n * 100,
      state: n === 3 ? 'rejected' : 'pending',
      error: n === 3 ? 'Family name is too long' : null,
      attempts: 0,
    }));
    await v1.table('outbox').bulkPut(entries);
    v1.close();

    const db = new FuselightDb(name);
    opened.push(db);
    await db.open();
    expect(db.verno).toBe(DEXIE_SCHEMA_VERSION);
    const migrated = await db.outbox.orderBy('seq').toArray();
    expect(migrated.map((entry) => entry.changeId)).toEqual([
      entries[1]!.changeId,
      entries[2]!.changeId,
      entries[0]!.changeId,
    ]);
    expect(migrated.map((entry) => entry.seq)).toEqual([1, 2, 3]);
    expect(migrated.map((entry) => entry.deleted)).toEqual([undefined, true, undefined]);
    expect(migrated[2]).toMatchObject({ state: 'rejected', error: 'Family name is too long' });
    expect(migrated.every((entry) => entry.deviceId === 'device-one')).toBe(true);
    expect((await db.meta.get('outboxSeq'))?.value).toBe(3);
    const record = await db.records.get(['patient', patientId] as unknown as string);
    expect(record?.serverFields).toEqual({});
    expect(db.tables.map((t) => t.name).sort()).toEqual(['keySlots', 'meta', 'outbox', 'records']);
    // The patient is found by each of its terms, from the records themselves.
    const search = new RecordsRepository(db);
    for (const query of ['amara', 'okafor', 'fl-1', '2016-04-09']) {
      expect((await search.searchPatients(query)).map((p) => p.id)).toEqual([patientId]);
    }
  });

  it('upgrades a version 2 database to slimmer indexes and keeps every record, Outbox entry and meta row', async () => {
    const name = `test-v2-${crypto.randomUUID()}`;
    // The schema exactly as version 2 shipped it.
    const v2 = new Dexie(name);
    v2.version(2).stores({
      records:
        '[collection+id], collection, id, version, updatedAt, [collection+fields.visitId], [collection+fields.patientId]',
      outbox: 'changeId, &seq, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
      patientSearch: 'id, *terms, siteId',
    });
    const site = '0190c6a0-0000-7000-8000-00000000a001';
    const patientId = '0190c6a0-0000-7000-8000-00000000b001';
    const visitId = '0190c6a0-0000-7000-8000-00000000c001';
    const record = (collection: string, id: string, fields: Record<string, unknown>) => ({
      collection,
      id,
      version: 4,
      deleted: false,
      fields,
      conflicts: [],
      pendingFields: collection === 'visit' ? ['reason'] : [],
      serverFields: collection === 'visit' ? { reason: 'Review' } : {},
      updatedAt: 5,
    });
    const rows = [
      record('patient', patientId, {
        siteId: site,
        givenName: 'Amara',
        familyName: 'Okafor',
        clinicNumber: 'FL-1',
        dateOfBirth: '2016-04-09',
      }),
      record('visit', visitId, { siteId: site, patientId, date: '2026-11-30', reason: 'Squint' }),
      record('plan', '0190c6a0-0000-7000-8000-00000000d001', { siteId: site, patientId, visitId }),
    ];
    await v2.table('records').bulkPut(rows);
    const entries = [1, 2].map((n) => ({
      changeId: `0190c6a0-0000-7000-8000-0000000e000${n}`,
      seq: n,
      collection: 'visit',
      recordId: visitId,
      baseVersion: 4,
      hlc: `000000000000${n}00-00000-device-one`,
      fields: { reason: `Squint ${n}` },
      authorId: 'author',
      deviceId: 'device-one',
      createdAt: n * 100,
      updatedAt: n * 100,
      state: n === 2 ? 'rejected' : 'pending',
      error: n === 2 ? 'Reason is too long' : null,
      attempts: n,
    }));
    await v2.table('outbox').bulkPut(entries);
    await v2.table('meta').bulkPut([
      { key: 'outboxSeq', value: 2 },
      { key: 'pullCursor', value: 4 },
    ]);
    const searchRow = { id: patientId, siteId: site, terms: ['amara', 'okafor', 'fl-1'] };
    await v2.table('patientSearch').put(searchRow);
    v2.close();

    const db = new FuselightDb(name);
    opened.push(db);
    await db.open();
    expect(db.verno).toBe(DEXIE_SCHEMA_VERSION);
    // Nothing is rewritten: every row reads back exactly as version 2 held it.
    expect(await db.records.toArray()).toEqual(
      [...rows].sort((a, b) => (a.collection < b.collection ? -1 : 1)),
    );
    expect(await db.outbox.orderBy('seq').toArray()).toEqual(entries);
    expect(await db.meta.toArray()).toEqual([
      { key: 'outboxSeq', value: 2 },
      { key: 'pullCursor', value: 4 },
    ]);
    // Only the indexes something reads are left, and those still answer; the search rows are
    // gone with their table (version 4), and the patient is found from its record.
    expect(db.tables.map((t) => t.name).sort()).toEqual(['keySlots', 'meta', 'outbox', 'records']);
    const indexes = (table: string) =>
      db
        .table(table)
        .schema.indexes.map((index) => index.name)
        .sort();
    expect(indexes('records')).toEqual([
      '[collection+fields.patientId]',
      '[collection+fields.visitId]',
    ]);
    expect(indexes('outbox')).toEqual([
      '[collection+recordId]',
      'authorId',
      'createdAt',
      'seq',
      'state',
    ]);
    expect(
      (
        await db.records
          .where('[collection+fields.visitId]')
          .equals(['plan', visitId])
          .primaryKeys()
      ).length,
    ).toBe(1);
    expect((await new RecordsRepository(db).searchPatients('oka')).map((p) => p.id)).toEqual([
      patientId,
    ]);
    expect(await db.outbox.where('[collection+recordId]').equals(['visit', visitId]).count()).toBe(
      2,
    );
  });
  it('upgrades a version 3 database by dropping the search rows only: records, Outbox entries and meta rows stay as they were', async () => {
    const name = `test-v3-${crypto.randomUUID()}`;
    // The schema exactly as version 3 shipped it.
    const v3 = new Dexie(name);
    v3.version(3).stores({
      records: '[collection+id], [collection+fields.visitId], [collection+fields.patientId]',
      outbox: 'changeId, &seq, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
      patientSearch: 'id, *terms',
    });
    const site = '0190c6a0-0000-7000-8000-00000000a001';
    const kept = '0190c6a0-0000-7000-8000-00000000b001';
    const gone = '0190c6a0-0000-7000-8000-00000000b002';
    const visitId = '0190c6a0-0000-7000-8000-00000000c001';
    const record = (
      collection: string,
      id: string,
      fields: Record<string, unknown>,
      deleted = false,
    ) => ({
      collection,
      id,
      version: 6,
      deleted,
      fields,
      conflicts: collection === 'visit' ? ['reason'] : [],
      pendingFields: collection === 'patient' && !deleted ? ['givenName'] : [],
      serverFields: collection === 'patient' && !deleted ? { givenName: 'Amarah' } : {},
      updatedAt: 9,
    });
    const rows = [
      record('patient', kept, {
        siteId: site,
        givenName: 'Amara',
        familyName: 'Okafor',
        clinicNumber: 'FL-1',
        dateOfBirth: '2016-04-09',
      }),
      record(
        'patient',
        gone,
        {
          siteId: site,
          givenName: 'Tomas',
          familyName: 'Okonjo',
          clinicNumber: 'FL-2',
          dateOfBirth: '2015-01-02',
        },
        true,
      ),
      record('visit', visitId, { siteId: site, patientId: kept, date: '2026-11-30' }),
    ];
    await v3.table('records').bulkPut(rows);
    const entries = [1, 2, 3].map((n) => ({
      changeId: `0190c6a0-0000-7000-8000-0000000e000${n}`,
      seq: n,
      collection: n === 3 ? 'visit' : 'patient',
      recordId: n === 3 ? visitId : kept,
      baseVersion: 6,
      hlc: `000000000000${n}00-00000-device-one`,
      fields: n === 3 ? { reason: 'Squint' } : { givenName: `Amara ${n}` },
      authorId: 'author',
      deviceId: 'device-one',
      createdAt: n * 100,
      updatedAt: n * 100,
      state: n === 2 ? 'rejected' : 'pending',
      error: n === 2 ? 'Given name is too long' : null,
      attempts: n - 1,
    }));
    await v3.table('outbox').bulkPut(entries);
    const meta = [
      { key: 'deviceClock', value: { wallMs: 1_764_576_000_000, counter: 2 } },
      { key: 'outboxSeq', value: 3 },
      { key: 'pullCursor', value: 6 },
    ];
    await v3.table('meta').bulkPut(meta);
    // Search rows as version 3 kept them, one of them out of date: after the upgrade, what is
    // found comes from the records alone.
    await v3.table('patientSearch').bulkPut([
      { id: kept, siteId: site, terms: ['amara', 'okafor', 'fl-1', '2016-04-09', 'stale'] },
      { id: gone, siteId: site, terms: ['tomas', 'okonjo'] },
    ]);
    v3.close();

    const db = new FuselightDb(name);
    opened.push(db);
    await db.open();
    expect(db.verno).toBe(DEXIE_SCHEMA_VERSION);
    expect(db.tables.map((t) => t.name).sort()).toEqual(['keySlots', 'meta', 'outbox', 'records']);
    expect([...db.backendDB().objectStoreNames].sort()).toEqual([
      'keySlots',
      'meta',
      'outbox',
      'records',
    ]);
    // Every record, Outbox entry and meta row reads back exactly as version 3 held it.
    expect(await db.records.toArray()).toEqual(
      [...rows].sort((a, b) =>
        a.collection === b.collection
          ? a.id.localeCompare(b.id)
          : a.collection.localeCompare(b.collection),
      ),
    );
    expect(await db.outbox.orderBy('seq').toArray()).toEqual(entries);
    expect(await db.meta.toArray()).toEqual(meta);
    const indexes = (table: string) =>
      db
        .table(table)
        .schema.indexes.map((index) => index.name)
        .sort();
    expect(indexes('records')).toEqual([
      '[collection+fields.patientId]',
      '[collection+fields.visitId]',
    ]);
    expect(indexes('outbox')).toEqual([
      '[collection+recordId]',
      'authorId',
      'createdAt',
      'seq',
      'state',
    ]);
    // The search still works, built from the records: the deleted patient is never listed.
    const search = new RecordsRepository(db);
    const ids = async (query: string) => (await search.searchPatients(query)).map((p) => p.id);
    expect(await ids('oko')).toEqual([]);
    expect(await ids('ok')).toEqual([kept]);
    expect(await ids('amara 2016-04')).toEqual([kept]);
    expect(await ids('9/4/2016')).toEqual([kept]);
    expect(await ids('stale')).toEqual([]);
  });
});
