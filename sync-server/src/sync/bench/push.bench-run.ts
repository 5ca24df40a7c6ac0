// Push throughput (field changes per second) for batches of 500 changes, one and four tablets,
// beside a plain batched INSERT … ON CONFLICT of the same rows (the records as the push stored
// them, fields and stamps) into a bare table, and where the push time goes. Figures are printed,
// not asserted.
//
// The throughput is measured against the production server bundle (sync-server/dist/main.cjs,
// built by `npm run bench:sync`) started as its own process on the same database, as
// `npm start` runs it. The breakdown comes from the same pushes sent to the app inside this test
// process, whose push observer (PUSH_OBSERVER) sums each push's step timings; code run by the test runner pays for
// its module runner on every imported binding, so that run is slower and its figures are
// printed beside it.
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import pg from 'pg';
import { PROTOCOL_VERSION, SCHEMA_VERSION, type PushResponse } from '@fuselight/shared';
import { afterAll, beforeAll, it } from 'vitest';
import { TestClock, type TestApp } from '../../testing/test-app';
import { emptyPushTimings, type PushObserver, type PushTimings } from '../push-observer';
import { CHANGE_CHANNEL, encodeChangeNotice } from '../../records/change-notice';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
  type Tablet,
} from '../testing/sync-test-kit';

const BATCH = 500;
const BATCHES_PER_TABLET = Number(process.env.BENCH_BATCHES ?? 8);
const ROUNDS = Number(process.env.BENCH_ROUNDS ?? 5);
const FIELDS_PER_CHANGE = Object.keys(patientFields(SITE_A)).length;

// A production-length secret shared by both servers, so the tablets' tokens work on either.
const BENCH_JWT_SECRET = 'push-benchmark-secret-0123456789abcdefghij';
const BUNDLE = join(import.meta.dirname, '..', '..', '..', 'dist', 'main.cjs');
// The Node flags `npm start` runs the server with (scripts/lib.mjs explains them).
const SERVER_NODE_ARGS = JSON.parse(
  readFileSync(join(import.meta.dirname, '..', '..', '..', 'server-node-args.json'), 'utf8'),
) as string[];

let t: TestApp;
/** Step timings of the in-process app's pushes, summed since the last reset. */
let stepTotals: PushTimings = emptyPushTimings();
const summingObserver: PushObserver = {
  pushed(timings) {
    for (const key of Object.keys(timings) as (keyof PushTimings)[])
      stepTotals[key] += timings[key];
  },
};
let inProcessUrl: string;
let bundleUrl: string;
let bundle: ChildProcess | null = null;

async function startBundle(databaseUrl: string): Promise<string> {
  if (!existsSync(BUNDLE)) throw new Error(`${BUNDLE} is missing: npm run build -w sync-server`);
  const probe = (await import('node:net')).createServer();
  await new Promise<void>((listening) => probe.listen(0, '127.0.0.1', listening));
  const port = (probe.address() as AddressInfo).port;
  await new Promise((closed) => probe.close(closed));
  // BENCH_PROFILE=<dir> writes a CPU profile of the bundle there when it stops (open it in
  // Chromium's DevTools): where the server's own time goes, beside the step breakdown.
  const profile = process.env.BENCH_PROFILE;
  const nodeArgs = [
    ...SERVER_NODE_ARGS,
    ...(profile ? ['--cpu-prof', `--cpu-prof-dir=${profile}`] : []),
  ];
  bundle = spawn(process.execPath, [...nodeArgs, BUNDLE], {
    env: {
      ...process.env,
      NODE_ENV: 'production',
      DATABASE_URL: databaseUrl,
      JWT_SECRET: BENCH_JWT_SECRET,
      HOST: '127.0.0.1',
      PORT: String(port),
      SEED_DEMO: 'false',
      // One process, as the in-process app and the raw upsert it is compared with.
      SERVER_PROCESSES: '1',
    },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  const base = `http://127.0.0.1:${port}`;
  for (let i = 0; i < 200; i += 1) {
    const ok = await fetch(`${base}/api/health`).then(
      (res) => res.ok,
      () => false,
    );
    if (ok) return `${base}/api/sync/push`;
    await new Promise((r) => setTimeout(r, 100));
  }
  throw new Error('the server bundle did not answer /api/health within 20 s');
}

beforeAll(async () => {
  // Real time, so the tokens signed here are current for the bundle's own clock.
  t = await createSyncTestApp({
    env: { JWT_SECRET: BENCH_JWT_SECRET },
    clock: new TestClock(new Date()),
    pushObserver: summingObserver,
  });
  const server = t.app.getHttpServer();
  await new Promise<void>((listening) => server.listen(0, '127.0.0.1', listening));
  inProcessUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}/api/sync/push`;
  bundleUrl = await startBundle(t.db.url);
});
afterAll(async () => {
  if (bundle && bundle.exitCode === null) {
    const exited = new Promise((done) => bundle?.once('exit', done));
    bundle.kill('SIGTERM');
    await exited;
  }
  await t.close();
});

/**
 * Each timed run starts from a checkpoint, so neither the push nor its raw limit pays for the
 * other's dirty pages being flushed, or writes full pages again after a checkpoint the other
 * happened to start.
 */
async function checkpoint(): Promise<void> {
  const client = new pg.Client({ connectionString: t.db.url });
  await client.connect();
  try {
    await client.query('checkpoint');
  } finally {
    await client.end();
  }
}

function batchOf(tablet: Tablet): Record<string, unknown>[] {
  return Array.from({ length: BATCH }, (_, i) =>
    tablet.change({ recordId: newId(), fields: patientFields(SITE_A, { clinicNumber: `B-${i}` }) }),
  );
}

/**
 * Each tablet sends its batches one after another, as the tablet's engine does, over a real
 * HTTP connection. Bodies are serialised before the clock starts — on a tablet that happens on
 * the tablet — as the raw run's rows are; everything the server does with a request is timed.
 */
async function pushRun(pushUrl: string, tablets: Tablet[]): Promise<number> {
  const bodies = tablets.map((tablet) =>
    Array.from({ length: BATCHES_PER_TABLET }, () =>
      JSON.stringify({
        protocol: PROTOCOL_VERSION,
        schemaVersion: SCHEMA_VERSION,
        changes: batchOf(tablet),
      }),
    ),
  );
  await checkpoint();
  const started = performance.now();
  await Promise.all(
    tablets.map(async (tablet, i) => {
      for (const body of bodies[i] ?? []) {
        const res = await fetch(pushUrl, {
          method: 'POST',
          headers: {
            'content-type': 'application/json',
            authorization: `Bearer ${tablet.caller.token}`,
          },
          body,
        });
        if (res.status !== 200) throw new Error(`push answered ${res.status}: ${await res.text()}`);
        const answer = (await res.json()) as PushResponse;
        if (answer.results.some((r) => r.status !== 'applied'))
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
async function rawRun(
  clients: number,
  /** Each batch in its own transaction, with (true) or without a push's one change notice. */
  transaction?: { notify: boolean },
): Promise<number> {
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
  await checkpoint();
  const started = performance.now();
  await Promise.all(
    batches.map(async (mine) => {
      for (const rows of mine) {
        const upsert: [string, string[]] = [
          `insert into "bench_raw" select * from jsonb_to_recordset($1::jsonb) as x("id" uuid, "collection" text, "site_id" uuid, "version" bigint, "deleted" boolean, "fields" jsonb, "stamps" jsonb)
           on conflict ("id") do update set "fields" = excluded."fields", "stamps" = excluded."stamps", "version" = excluded."version"`,
          [rows],
        ];
        if (!transaction) {
          await pool.query(...upsert);
          continue;
        }
        const client = await pool.connect();
        try {
          await client.query('begin');
          await client.query(...upsert);
          if (transaction.notify) {
            await client.query('select pg_notify($1, $2)', [
              CHANGE_CHANNEL,
              encodeChangeNotice({ sites: [SITE_A], desk: false }),
            ]);
          }
          await client.query('commit');
        } finally {
          client.release();
        }
      }
    }),
  );
  const seconds = (performance.now() - started) / 1000;
  await pool.end();
  return (clients * BATCHES_PER_TABLET * BATCH * FIELDS_PER_CHANGE) / seconds;
}

const STEPS: Record<keyof PushTimings, string> = {
  envelopeMs: 'check the envelope (zod shape)',
  beginMs: 'open the transaction',
  earlierMs: 'read earlier answers (replays)',
  lockMs: 'lock records, read open disputes',
  planMs: 'validate and merge (JS)',
  writeMs: 'write records and history',
  logMs: 'log results and audit events',
  commitMs: 'commit',
};

const median = (values: number[]) =>
  [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)] ?? 0;

interface Round {
  push1: number;
  raw1: number;
  push4: number;
  raw4: number;
}

// Rounds alternate the push and its raw limit, so a burst of load elsewhere on the machine hits
// both; the ratio reported is the median of the rounds' ratios.
async function rounds(pushUrl: string, one: Tablet[], four: Tablet[], count: number) {
  const out: Round[] = [];
  for (let round = 0; round < count; round += 1) {
    const push1 = await pushRun(pushUrl, one);
    const raw1 = await rawRun(1);
    const push4 = await pushRun(pushUrl, four);
    const raw4 = await rawRun(4);
    out.push({ push1, raw1, push4, raw4 });
  }
  return out;
}

const fmt = (n: number) => Math.round(n).toLocaleString('en-GB');

function line(label: string, push: number[], raw: number[]): string {
  const ratios = push.map((p, i) => p / (raw[i] ?? 1));
  return `  ${label}: ${fmt(median(push))} field changes/s   raw INSERT … ON CONFLICT: ${fmt(median(raw))}/s   ratio ${median(ratios).toFixed(2)}  (rounds: ${ratios.map((r) => r.toFixed(2)).join(', ')})`;
}

it('measures push throughput', async () => {
  const one = [await tabletFor(t, 'orthoptist', [SITE_A])];
  const four = await Promise.all([1, 2, 3, 4].map(() => tabletFor(t, 'orthoptist', [SITE_A])));
  await pushRun(bundleUrl, one); // warm-up
  await pushRun(inProcessUrl, one);
  await rawRun(1);

  const measured = await rounds(bundleUrl, one, four, ROUNDS);

  // The breakdown: one tablet's batches through the app in this process.
  stepTotals = emptyPushTimings();
  const started = performance.now();
  const inProcess = await pushRun(inProcessUrl, one);
  const oneTabletMs = performance.now() - started;
  const breakdown = { ...stepTotals };
  const inProcessRaw = await rawRun(1);

  // What the change notice costs: the same raw batches, each in a transaction of its own, without
  // and with one pg_notify as a push sends it (every server process LISTENs meanwhile).
  const notice: { plain1: number; notify1: number; plain4: number; notify4: number }[] = [];
  for (let round = 0; round < ROUNDS; round += 1) {
    notice.push({
      plain1: await rawRun(1, { notify: false }),
      notify1: await rawRun(1, { notify: true }),
      plain4: await rawRun(4, { notify: false }),
      notify4: await rawRun(4, { notify: true }),
    });
  }
  const noticeLine = (label: string, plain: number[], notify: number[]) =>
    `    ${label}: without ${fmt(median(plain))}/s   with one pg_notify ${fmt(median(notify))}/s   ratio ${median(notify.map((n, i) => n / (plain[i] ?? 1))).toFixed(2)}`;

  const inSteps = Object.values(breakdown).reduce((a, b) => a + b, 0);
  const perBatch = (ms: number) => (ms / BATCHES_PER_TABLET).toFixed(1).padStart(6);
  const lines = [
    `push benchmark: batches of ${BATCH} changes x ${FIELDS_PER_CHANGE} fields, ${BATCHES_PER_TABLET} batches per tablet, ${ROUNDS} rounds (medians; aim: ratio ≥ 0.5)`,
    `  production server bundle (node ${[...SERVER_NODE_ARGS, 'dist/main.cjs'].join(' ')}, its own process):`,
    line(
      '  1 tablet ',
      measured.map((r) => r.push1),
      measured.map((r) => r.raw1),
    ),
    line(
      '  4 tablets',
      measured.map((r) => r.push4),
      measured.map((r) => r.raw4),
    ),
    `  where one tablet's push time goes (the app inside the test runner: ${fmt(inProcess)} field changes/s, ratio ${(inProcess / inProcessRaw).toFixed(2)}; ms per batch of ${BATCH}):`,
    ...Object.entries(breakdown).map(
      ([step, ms]) => `    ${STEPS[step as keyof typeof STEPS].padEnd(44)} ${perBatch(ms)}`,
    ),
    `    ${'outside the transaction (HTTP, sign-in check)'.padEnd(44)} ${perBatch(oneTabletMs - inSteps)}`,
    `    ${'whole request, as the tablet waits'.padEnd(44)} ${perBatch(oneTabletMs)}`,
    `  the live-changes notice (every push sends one NOTIFY on commit; the figures above include it):`,
    `  raw batches of ${BATCH} upserted one transaction each, field changes/s:`,
    noticeLine(
      '1 client ',
      notice.map((r) => r.plain1),
      notice.map((r) => r.notify1),
    ),
    noticeLine(
      '4 clients',
      notice.map((r) => r.plain4),
      notice.map((r) => r.notify4),
    ),
  ];
  process.stdout.write(`\n${lines.join('\n')}\n\n`);
});
