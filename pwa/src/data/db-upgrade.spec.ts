// Every Dexie schema version the tablet ever shipped upgrades to the current one with its data:
// for each declared version, a database written with that version's own store declarations
// (db-upgrade.fixtures.ts) is opened by the current build, and every row of every table is read
// back and compared field by field. An app update, offline or with a full Outbox, loses nothing.
import Dexie from 'dexie';
import { afterEach, describe, expect, it } from 'vitest';
import {
  DEXIE_SCHEMA_HISTORY,
  DEXIE_SCHEMA_VERSION,
  FuselightDb,
  type DexieSchemaDeclaration,
} from './db';
import {
  DEXIE_UPGRADE_FIXTURES,
  livedTables,
  type FixtureRow,
  type FixtureTables,
} from './db-upgrade.fixtures';

const opened: Dexie[] = [];
afterEach(async () => {
  for (const db of opened.splice(0)) {
    db.close();
    await db.delete();
  }
});

/** Writes a database as the build of `version` left it: its declarations only, no upgrades. */
async function writeAsVersion(name: string, version: number, tables: FixtureTables) {
  const old = new Dexie(name);
  const declared: DexieSchemaDeclaration[] = DEXIE_SCHEMA_HISTORY.filter(
    (declaration) => declaration.version <= version,
  );
  for (const declaration of declared) old.version(declaration.version).stores(declaration.stores);
  await old.open();
  expect(old.verno).toBe(version);
  await old.transaction('rw', old.tables, async () => {
    for (const [table, rows] of Object.entries(tables)) await old.table(table).bulkAdd(rows);
  });
  // What was written is what the fixture says (nothing refused by a key or unique index).
  for (const [table, rows] of Object.entries(tables)) {
    expect([table, await old.table(table).count()]).toEqual([table, rows.length]);
  }
  old.close();
}

/** The primary key of a row as text, for matching rows and naming them in a failure. */
function keyOf(db: Dexie, table: string, row: FixtureRow): string {
  const primary = db.table(table).schema.primKey;
  const path = primary.keyPath;
  const parts = Array.isArray(path) ? path : [path ?? ''];
  return JSON.stringify(parts.map((part) => row[part]));
}

/** Every expected row is there, with exactly its fields and values, and no other row is. */
async function expectRowsFieldByField(db: Dexie, expected: FixtureTables) {
  expect(db.tables.map((table) => table.name).sort()).toEqual(Object.keys(expected).sort());
  for (const [table, rows] of Object.entries(expected)) {
    const actual = new Map<string, FixtureRow>();
    for (const row of (await db.table(table).toArray()) as FixtureRow[]) {
      actual.set(keyOf(db, table, row), row);
    }
    expect([table, actual.size]).toEqual([table, rows.length]);
    for (const row of rows) {
      const key = keyOf(db, table, row);
      const found = actual.get(key);
      expect(found, `${table} ${key} is missing`).toBeDefined();
      expect(Object.keys(found!).sort(), `${table} ${key}: its fields`).toEqual(
        Object.keys(row).sort(),
      );
      for (const field of Object.keys(row)) {
        expect(found![field], `${table} ${key}.${field}`).toEqual(row[field]);
      }
    }
  }
}

describe('upgrading the tablet database from every earlier version', () => {
  it('has one fixture database for every declared schema version, the current one included', () => {
    expect(DEXIE_UPGRADE_FIXTURES.map((fixture) => fixture.version)).toEqual(
      DEXIE_SCHEMA_HISTORY.map((declaration) => declaration.version),
    );
    expect(DEXIE_SCHEMA_HISTORY.at(-1)?.version).toBe(DEXIE_SCHEMA_VERSION);
  });

  it('uses data that has lived: hundreds of rows, versions of both lengths, a full Outbox', () => {
    const lived = livedTables();
    expect(lived.records.length).toBeGreaterThan(300);
    expect(new Set(lived.records.map((record) => String(record.version).length)).size).toBe(3);
    expect(new Set(lived.outbox.map((entry) => entry.state))).toEqual(
      new Set(['pending', 'rejected']),
    );
    expect(lived.outbox.filter((entry) => entry.deleted === false)).not.toHaveLength(0);
  });

  it.each(DEXIE_UPGRADE_FIXTURES.map((fixture) => [fixture.version, fixture] as const))(
    'opens a version %i database with the current build and keeps every row, field by field',
    async (version, fixture) => {
      const name = `upgrade-v${version}-${crypto.randomUUID()}`;
      await writeAsVersion(name, version, fixture.stored(livedTables()));

      const db = new FuselightDb(name);
      opened.push(db);
      await db.open();

      expect(db.verno).toBe(DEXIE_SCHEMA_VERSION);
      const expected = fixture.expected(livedTables());
      await expectRowsFieldByField(db, expected);
      // The upgraded tables answer through the current indexes: the Outbox in creation order,
      // a record's entries, a visit's Sections.
      const outbox = expected.outbox ?? [];
      expect(await db.outbox.orderBy('seq').primaryKeys()).toEqual(
        [...outbox].sort((a, b) => Number(a.seq) - Number(b.seq)).map((entry) => entry.changeId),
      );
      const first = outbox[0]!;
      expect(
        await db.outbox
          .where('[collection+recordId]')
          .equals([String(first.collection), String(first.recordId)])
          .count(),
      ).toBe(
        outbox.filter((e) => e.collection === first.collection && e.recordId === first.recordId)
          .length,
      );
      const section = (expected.records ?? []).find((record) => record.collection === 'coverTest')!;
      const visitId = (section.fields as { visitId: string }).visitId;
      expect(
        (
          await db.records
            .where('[collection+fields.visitId]')
            .equals(['coverTest', visitId])
            .toArray()
        ).map((record) => record.id),
      ).toEqual([section.id]);
    },
  );
});
