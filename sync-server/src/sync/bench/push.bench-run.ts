// Push throughput (field changes per second) for batches of 500 changes, one and four tablets,
// beside a plain batched INSERT … ON CONFLICT of the same rows (the records as the push stored
// them, fields and stamps) into a bare table, and where the push time goes. Figures are printed, not asserted.
import pg from 'pg';
import { afterAll, beforeAll, it } from 'vitest';
import type { TestApp } from '../../testing/test-app';
import { SyncService } from '../sync.service';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
  type Tablet,
} from '../testing/sync-test-kit';

const BATCH = 500;
const BATCHES_PER_TABLET = Number(process.env.BENCH_BATCHES ?? 6);
const FIELDS_PER_CHANGE = Object.keys(patientFields(SITE_A)).length;

let t: TestApp;
beforeAll(async () => {
  t = await createSyncTestApp();
});
afterAll(async () => {
  await t.close();
});

function batchOf(tablet: Tablet): Record<string, unknown>[] {
  return Array.from({ length: BATCH }, (_, i) =>
    tablet.change({ recordId: newId(), fields: patientFields(SITE_A, { clinicNumber: `B-${i}` }) }),
  );
}

async function pushRun(tablets: Tablet[]): Promise<number> {
  const bodies = tablets.map((tablet) =>
    Array.from({ length: BATCHES_PER_TABLET }, () => batchOf(tablet)),
  );
  const started = performance.now();
  await Promise.all(
    tablets.map(async (tablet, i) => {
      for (const body of bodies[i] ?? []) {
        const res = await tablet.pushOk(body);
        if (res.results.some((r) => r.status !== 'applied'))
          throw new Error('a benchmark change was not applied');
      }
    }),
  );
  const seconds = (performance.now() - started) / 1000;
  return (tablets.length * BATCHES_PER_TABLET * BATCH * FIELDS_PER_CHANGE) / seconds;
}

/**
 * The raw limit: the same rows the push stored (each record's fields and per-field stamps, read
 * back from sync_record, under fresh ids) upserted in batches of the same size into a bare table
 * with only a primary key, by `clients` connections at once.
 */
async function rawRun(clients: number): Promise<number> {
  const pool = new pg.Pool({ connectionString: t.db.url, max: clients });
  await pool.query(
    `create table if not exists "bench_raw" ("id" uuid primary key, "collection" text, "site_id" uuid, "version" bigint, "deleted" boolean, "fields" jsonb, "stamps" jsonb)`,
  );
  const stored = await pool.query<{
    collection: string;
    site_id: string;
    version: string;
    deleted: boolean;
    fields: unknown;
    stamps: unknown;
  }>(
    `select "collection", "site_id", "version", "deleted", "fields", "stamps" from "sync_record"
      where "collection" = 'patient' order by "version" desc limit $1`,
    [clients * BATCHES_PER_TABLET * BATCH],
  );
  if (stored.rows.length < clients * BATCHES_PER_TABLET * BATCH)
    throw new Error('not enough pushed rows to replay');
  const batches = Array.from({ length: clients }, (_, c) =>
    Array.from({ length: BATCHES_PER_TABLET }, (_, b) => {
      const from = (c * BATCHES_PER_TABLET + b) * BATCH;
      return JSON.stringify(
        stored.rows.slice(from, from + BATCH).map((row) => ({ ...row, id: newId() })),
      );
    }),
  );
  const started = performance.now();
  await Promise.all(
    batches.map(async (mine) => {
      for (const rows of mine) {
        await pool.query(
          `insert into "bench_raw" select * from jsonb_to_recordset($1::jsonb) as x("id" uuid, "collection" text, "site_id" uuid, "version" bigint, "deleted" boolean, "fields" jsonb, "stamps" jsonb)
           on conflict ("id") do update set "fields" = excluded."fields", "stamps" = excluded."stamps", "version" = excluded."version"`,
          [rows],
        );
      }
    }),
  );
  const seconds = (performance.now() - started) / 1000;
  await pool.end();
  return (clients * BATCHES_PER_TABLET * BATCH * FIELDS_PER_CHANGE) / seconds;
}

it('measures push throughput', async () => {
  const sync = t.app.get(SyncService);
  const one = [await tabletFor(t, 'orthoptist', [SITE_A])];
  const four = await Promise.all([1, 2, 3, 4].map(() => tabletFor(t, 'orthoptist', [SITE_A])));
  await pushRun(one); // warm-up
  await rawRun(1);
  for (const key of Object.keys(sync.timings) as (keyof typeof sync.timings)[])
    sync.timings[key] = 0;

  const push1 = await pushRun(one);
  const raw1 = await rawRun(1);
  const breakdown = { ...sync.timings };
  const push4 = await pushRun(four);
  const raw4 = await rawRun(4);

  const fmt = (n: number) => Math.round(n).toLocaleString('en-GB');
  const lines = [
    `push benchmark: batches of ${BATCH} changes x ${FIELDS_PER_CHANGE} fields, ${BATCHES_PER_TABLET} batches per tablet`,
    `  1 tablet : ${fmt(push1)} field changes/s   raw INSERT … ON CONFLICT: ${fmt(raw1)}/s   ratio ${(push1 / raw1).toFixed(2)}`,
    `  4 tablets: ${fmt(push4)} field changes/s   raw INSERT … ON CONFLICT: ${fmt(raw4)}/s   ratio ${(push4 / raw4).toFixed(2)}`,
    `  where one tablet's push time goes (ms over ${BATCHES_PER_TABLET} batches, server side):`,
    ...Object.entries(breakdown).map(
      ([step, ms]) => `    ${step.padEnd(9)} ${ms.toFixed(0).padStart(7)}`,
    ),
  ];
  process.stdout.write(`\n${lines.join('\n')}\n\n`);
});
