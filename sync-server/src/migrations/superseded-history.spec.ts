// The record history keeps every value each field has held across the move from one history row
// per field to superseded values only (Migration20261202000000SupersededHistory): what the
// Review desk read before the migration it reads after, and later writes and purges add to it.
import { MikroORM } from '@mikro-orm/postgresql';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inject } from 'vitest';
import { ormOptions } from '../database/orm-options';
import { databaseUrl } from '../testing/global-setup';

const SITE = '0190c6a0-0000-7000-8000-0000000000a1';
const R1 = '0190c6a0-0000-7000-8000-0000000000d1';
const R2 = '0190c6a0-0000-7000-8000-0000000000d2';

interface HistoryRow {
  record_id: string;
  field: string;
  value: unknown;
  hlc: string;
  version: string;
  by_user: string;
  device: string;
}

const stamp = (version: number, by = 'u1') => ({
  hlc: `000000000000${version}-0000-dev1`,
  version,
  by,
  device: 'dev1',
  at: `2026-12-01T09:00:0${version}.000Z`,
});

let name: string;
let url: string;
let client: pg.Client;

async function history(): Promise<HistoryRow[]> {
  const { rows } = await client.query<HistoryRow>(
    `select h."record_id", h."field", h."value", h."hlc", h."version"::text as "version", h."by_user", h."device"
       from "review_field_value" h order by h."record_id", h."field", h."version"`,
  );
  return rows;
}

async function writeRecord(
  id: string,
  version: number,
  fields: Record<string, unknown>,
  stamps: Record<string, unknown>,
  deleted = false,
): Promise<void> {
  await client.query(
    `insert into "sync_record" ("id", "collection", "site_id", "version", "deleted", "fields", "stamps", "created_at", "updated_at")
     values ($1, 'patient', $2, $3, $4, $5, $6, now(), now())
     on conflict ("id") do update set "version" = excluded."version", "deleted" = excluded."deleted",
       "fields" = excluded."fields", "stamps" = excluded."stamps", "updated_at" = excluded."updated_at"`,
    [id, SITE, version, deleted, JSON.stringify(fields), JSON.stringify(stamps)],
  );
}

async function migrate(to?: string): Promise<void> {
  const orm = await MikroORM.init(ormOptions(url, { entities: [] }));
  try {
    await orm.getMigrator().up(to ? { to } : undefined);
  } finally {
    await orm.close(true);
  }
}

beforeAll(async () => {
  const admin = inject('adminDatabaseUrl');
  name = `hist_${process.pid}_${Date.now()}`;
  const c = new pg.Client({ connectionString: admin });
  await c.connect();
  await c.query(`create database "${name}"`);
  await c.end();
  url = databaseUrl(admin, name);
  await migrate('Migration20261201060000AddendumRecords');
  client = new pg.Client({ connectionString: url });
  await client.connect();
  await client.query(`insert into "site" ("id", "name", "kind") values ($1, 'Site', 'clinic')`, [
    SITE,
  ]);
});

afterAll(async () => {
  await client.end();
  const c = new pg.Client({ connectionString: inject('adminDatabaseUrl') });
  await c.connect();
  await c.query(`drop database if exists "${name}" with (force)`);
  await c.end();
});

describe('the record history across the migration to superseded values', () => {
  let before: HistoryRow[];

  it('carries over every value recorded per field, superseded and current', async () => {
    // R1: created at version 1, its family name changed at 2 and again at 3 by someone else.
    await writeRecord(
      R1,
      1,
      { givenName: 'Ada', familyName: 'Alder' },
      { givenName: stamp(1), familyName: stamp(1) },
    );
    await writeRecord(
      R1,
      2,
      { givenName: 'Ada', familyName: 'Birch' },
      { givenName: stamp(1), familyName: stamp(2) },
    );
    await writeRecord(
      R1,
      3,
      { givenName: 'Ada', familyName: 'Cedar' },
      { givenName: stamp(1), familyName: stamp(3, 'u2') },
    );
    // R2: created, then deleted.
    await writeRecord(R2, 4, { givenName: 'Bram' }, { givenName: stamp(4) });
    await writeRecord(
      R2,
      5,
      { givenName: 'Bram' },
      { givenName: stamp(4), deleted: stamp(5) },
      true,
    );
    before = await history();
    expect(before.map((r) => [r.record_id, r.field, r.value, r.version])).toEqual([
      [R1, 'familyName', 'Alder', '1'],
      [R1, 'familyName', 'Birch', '2'],
      [R1, 'familyName', 'Cedar', '3'],
      [R1, 'givenName', 'Ada', '1'],
      [R2, 'deleted', true, '5'],
      [R2, 'givenName', 'Bram', '4'],
    ]);

    await migrate();
    expect(await history()).toEqual(before);
  });

  it('records a replaced value once, and nothing for a new record', async () => {
    const { rows: empty } = await client.query<{ n: string }>(
      `select count(*)::text as "n" from "review_superseded"`,
    );
    const R3 = '0190c6a0-0000-7000-8000-0000000000d3';
    await writeRecord(R3, 6, { givenName: 'Cleo' }, { givenName: stamp(6) });
    const { rows: afterInsert } = await client.query<{ n: string }>(
      `select count(*)::text as "n" from "review_superseded"`,
    );
    expect(afterInsert[0]?.n).toBe(empty[0]?.n);

    await writeRecord(R3, 7, { givenName: 'Clio' }, { givenName: stamp(7, 'u2') });
    // A write that leaves the stamp as it was supersedes nothing.
    await writeRecord(R3, 8, { givenName: 'Clio' }, { givenName: stamp(7, 'u2') });
    const r3 = (await history()).filter((r) => r.record_id === R3);
    expect(r3.map((r) => [r.field, r.value, r.version, r.by_user])).toEqual([
      ['givenName', 'Cleo', '6', 'u1'],
      ['givenName', 'Clio', '7', 'u2'],
    ]);
  });

  it('keeps a purged record’s last values', async () => {
    const r2Before = (await history()).filter((r) => r.record_id === R2);
    await client.query(`delete from "sync_record" where "id" = $1`, [R2]);
    expect((await history()).filter((r) => r.record_id === R2)).toEqual(r2Before);
  });

  it('changes several fields of many records in one statement with one history row each', async () => {
    const ids = Array.from(
      { length: 50 },
      (_, i) => `0190c6a0-0000-7000-8000-0000000010${String(i).padStart(2, '0')}`,
    );
    for (const id of ids) await writeRecord(id, 10, { a: 1, b: 1 }, { a: stamp(1), b: stamp(1) });
    const { rows: n0 } = await client.query<{ n: number }>(
      `select count(*)::int as "n" from "review_superseded"`,
    );
    await client.query(
      `update "sync_record" set "fields" = '{"a": 2, "b": 2}', "stamps" = $2, "version" = 11
        where "id" = any($1::uuid[])`,
      [ids, JSON.stringify({ a: stamp(2), b: stamp(2) })],
    );
    const { rows: n1 } = await client.query<{ n: number }>(
      `select count(*)::int as "n" from "review_superseded"`,
    );
    expect((n1[0]?.n ?? 0) - (n0[0]?.n ?? 0)).toBe(50);
    const one = (await history()).filter((r) => r.record_id === ids[7]);
    expect(one.map((r) => [r.field, r.value, r.version])).toEqual([
      ['a', 1, '1'],
      ['a', 2, '2'],
      ['b', 1, '1'],
      ['b', 2, '2'],
    ]);
  });
});
