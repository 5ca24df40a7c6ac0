// RecordStore.upsert sends a batch in a shortened form (shared values bound once, stamps by hlc alone
// where the batch's writer made them, "every field" for a stamp that covers a whole record).
// Whatever the mix, the stored rows must be exactly the records given.
import { v7 as uuidv7 } from 'uuid';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { EntityManager } from '@mikro-orm/postgresql';
import type { TestApp } from '../testing/test-app';
import { SITE_A, SITE_B, createSyncTestApp } from '../sync/testing/sync-test-kit';
import { encodeRecordRows, type RecordWrite } from './record-row.codec';
import { RecordStore } from './record-store';
import type { StoredStamp } from './stored-record';

let t: TestApp;
beforeAll(async () => {
  t = await createSyncTestApp();
});
afterAll(async () => {
  await t.close();
});

const AT = '2026-12-02T10:00:00.000Z';
const EARLIER = '2026-11-20T08:30:00.000Z';
const WRITER = { by: uuidv7(), device: uuidv7() };
const OTHER = { by: uuidv7(), device: 'server' };

function stamp(version: number, who: { by: string; device: string }, at: string): StoredStamp {
  return { hlc: `001796200000000-0000${version % 10}-${who.device}`, version, ...who, at };
}

async function write(records: RecordWrite[]): Promise<void> {
  await t
    .em()
    .fork()
    .transactional((em) =>
      t.app.get(RecordStore).upsert(em as EntityManager, records, new Date(AT)),
    );
}

async function stored(id: string) {
  const rows = await t
    .em()
    .getConnection()
    .execute(
      `select "collection", "site_id", "version"::text as "version", "deleted", "fields", "stamps" from "sync_record" where "id" = ?`,
      [id],
    );
  const row = rows[0] as Record<string, unknown>;
  return { ...row, version: Number(row.version) };
}

function expectStored(record: RecordWrite, row: Awaited<ReturnType<typeof stored>>) {
  expect(row).toEqual({
    collection: record.collection,
    site_id: record.siteId,
    version: record.version,
    deleted: record.deleted,
    fields: record.fields,
    stamps: JSON.parse(JSON.stringify(record.stamps)),
  });
}

describe('RecordStore.upsert', () => {
  it('stores a mixed batch exactly as given, whichever parts travel shortened', async () => {
    const fresh = stamp(9_000_003, WRITER, AT);
    const sameWriterEarlierVersion = stamp(9_000_001, WRITER, AT);
    const older = stamp(8_000_001, OTHER, EARLIER);
    // A stamp written before stamps carried their time, and one with a key the short form lacks.
    const legacy = { hlc: older.hlc, version: 7_000_001, by: OTHER.by, device: OTHER.device };
    const extra = { ...fresh, note: 'kept' } as StoredStamp;
    const records: RecordWrite[] = [
      {
        // A new record: one stamp covering exactly its fields.
        id: uuidv7(),
        collection: 'patient',
        siteId: SITE_A,
        version: 9_000_003,
        deleted: false,
        fields: { siteId: SITE_A, givenName: 'Ilse', familyName: 'Varga' },
        stamps: { siteId: fresh, givenName: fresh, familyName: fresh },
      },
      {
        // An edited record: older stamps from others, a legacy one, and two by this writer.
        id: uuidv7(),
        collection: 'visit',
        siteId: SITE_B,
        version: 9_000_003,
        deleted: false,
        fields: { siteId: SITE_B, notes: 'later', plan: null, status: 'open' },
        stamps: {
          siteId: older,
          notes: fresh,
          plan: sameWriterEarlierVersion,
          status: legacy as StoredStamp,
        },
      },
      {
        // A deleted record: its tombstone stamp covers a field that is not among its values.
        id: uuidv7(),
        collection: 'patient',
        siteId: SITE_A,
        version: 9_000_002,
        deleted: true,
        fields: { siteId: SITE_A, givenName: 'Ilse' },
        stamps: { siteId: older, givenName: older, deleted: stamp(9_000_002, WRITER, AT) },
      },
      {
        id: uuidv7(),
        collection: 'patient',
        siteId: SITE_A,
        version: 9_000_003,
        deleted: false,
        fields: { siteId: SITE_A },
        stamps: { siteId: extra },
      },
    ];
    await write(records);
    for (const record of records) expectStored(record, await stored(record.id));
  });

  it('replaces an existing row with the new state', async () => {
    const id = uuidv7();
    const first = stamp(9_100_001, OTHER, EARLIER);
    const base: RecordWrite = {
      id,
      collection: 'patient',
      siteId: SITE_A,
      version: 9_100_001,
      deleted: false,
      fields: { siteId: SITE_A, givenName: 'Ilse' },
      stamps: { siteId: first, givenName: first },
    };
    await write([base]);
    const next = stamp(9_200_001, WRITER, AT);
    const edited: RecordWrite = {
      ...base,
      version: 9_200_001,
      fields: { ...base.fields, givenName: 'Ilona' },
      stamps: { ...base.stamps, givenName: next },
    };
    await write([edited]);
    expectStored(edited, await stored(id));
  });

  it('shortens what the batch shares and leaves the rest whole', () => {
    const fresh = stamp(5, WRITER, AT);
    const older = stamp(2, OTHER, EARLIER);
    const { shared, rows } = encodeRecordRows([
      {
        id: 'a',
        collection: 'patient',
        siteId: SITE_A,
        version: 5,
        deleted: false,
        fields: { x: 1, y: 2 },
        stamps: { x: fresh, y: fresh },
      },
      {
        id: 'b',
        collection: 'visit',
        siteId: SITE_A,
        version: 6,
        deleted: true,
        fields: { x: 1, y: 2 },
        stamps: { x: older, y: fresh },
      },
    ]);
    expect(shared).toEqual({
      collection: 'patient',
      siteId: SITE_A,
      stamp: { by: WRITER.by, device: WRITER.device, at: AT },
    });
    expect(rows).toEqual([
      { id: 'a', v: 5, f: { x: 1, y: 2 }, g: [[fresh.hlc, null]] },
      {
        id: 'b',
        v: 6,
        f: { x: 1, y: 2 },
        g: [
          [older, { x: 0 }],
          [fresh.hlc, { y: 0 }, 5],
        ],
        c: 'visit',
        d: true,
      },
    ]);
  });
});
