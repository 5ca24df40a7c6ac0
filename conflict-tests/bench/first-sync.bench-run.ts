// First sync of a large clinic into Dexie on fake-indexeddb, beside a plain Dexie bulkPut of the
// same records in the same run. The pages come from memory, exactly as the server would send
// them, serialised before the clock starts (that is the server's work), so the figure is the
// tablet's own cost (parse, validation, merge, writes, keeping the patient directory current,
// yielding to the screen); the server's push and pull throughput is bench:sync's other half.
// Yields go through the engine's own yieldToScreen (a MessageChannel task here), measured for
// the longest stretch.
//   cd conflict-tests && npx vitest run --config vitest.bench.config.mts
//   FUSELIGHT_BENCH_RECORDS=50000 (default) sets the size, FUSELIGHT_BENCH_CHUNK the engine's
//   chunk size (default: the engine's own).
import type { PulledRecord } from '@fuselight/shared';
import { FuselightDb, type StoredRecord } from '@pwa/data/db';
import { SyncEngine, yieldToScreen } from '@pwa/sync/sync-engine';
import { v7 as uuidv7 } from 'uuid';
import { describe, expect, it } from 'vitest';

const TOTAL = Number(process.env.FUSELIGHT_BENCH_RECORDS ?? 50_000);
const PAGE = 1000;
const CHUNK = process.env.FUSELIGHT_BENCH_CHUNK ? Number(process.env.FUSELIGHT_BENCH_CHUNK) : null;
const SITE = '0190c6a0-0000-7000-8000-00000000a001';
const USER = '0190c6a0-0000-7000-8000-00000000d001';
const DEVICE = '0190c6a0-0000-7000-8000-0000000de001';

function stamp(version: number) {
  return {
    hlc: `${String(1_764_576_000_000 + version).padStart(15, '0')}-00000-${DEVICE}`,
    version,
    by: USER,
    device: DEVICE,
  };
}

/** A clinic: one patient in five, a visit per patient, three sections per visit. */
function clinicRecords(total: number): PulledRecord[] {
  const records: PulledRecord[] = [];
  let version = 0;
  while (records.length < total) {
    const patientId = uuidv7();
    const visitId = uuidv7();
    const made: Array<Pick<PulledRecord, 'collection' | 'fields'>> = [
      {
        collection: 'patient',
        fields: {
          siteId: SITE,
          givenName: `Given${records.length}`,
          familyName: `Family${records.length}`,
          dateOfBirth: '2015-03-0' + ((records.length % 9) + 1),
          clinicNumber: `FL-${records.length}`,
        },
      },
      {
        collection: 'visit',
        fields: {
          siteId: SITE,
          patientId,
          date: '2026-11-30',
          clinicianId: USER,
          status: 'signed',
          reason: 'Review',
        },
      },
      {
        collection: 'plan',
        fields: { siteId: SITE, patientId, visitId, impression: 'Stable', management: ['review'] },
      },
      {
        collection: 'visualAcuity',
        fields: { siteId: SITE, patientId, visitId, skippedReason: null },
      },
      {
        collection: 'coverTest',
        fields: { siteId: SITE, patientId, visitId, skippedReason: null },
      },
    ];
    made.forEach((record, index) => {
      if (records.length >= total) return;
      version += 1;
      records.push({
        collection: record.collection,
        id: index === 0 ? patientId : index === 1 ? visitId : uuidv7(),
        version,
        deleted: false,
        fields: record.fields,
        stamps: Object.fromEntries(
          Object.keys(record.fields).map((field) => [field, stamp(version)]),
        ),
        conflicts: [],
      });
    });
  }
  return records;
}

function pageBody(records: PulledRecord[], after: number, limit: number): string {
  const start = records.findIndex((r) => r.version > after);
  const page = start < 0 ? [] : records.slice(start, start + limit);
  const cursor = page.at(-1)?.version ?? after;
  const more = start >= 0 && start + limit < records.length;
  return JSON.stringify({ records: page, cursor, more });
}

/**
 * Serves pull pages from memory as JSON bodies (what the server would put on the wire), the
 * pages of a first sync serialised in advance; any other request is built when asked.
 */
function pagesFetch(records: PulledRecord[]): typeof fetch {
  const bodies = new Map<string, string>();
  for (let start = 0; start < records.length; start += PAGE) {
    const after = start === 0 ? 0 : (records[start - 1] as PulledRecord).version;
    bodies.set(`${after}/${PAGE}`, pageBody(records, after, PAGE));
  }
  return async (input) => {
    const url = new URL(String(input));
    const after = Number(url.searchParams.get('after') ?? 0);
    const limit = Number(url.searchParams.get('limit') ?? PAGE);
    const body = bodies.get(`${after}/${limit}`) ?? pageBody(records, after, limit);
    return new Response(body, {
      status: 200,
      headers: { 'Content-Type': 'application/json' },
    });
  };
}

function asStored(record: PulledRecord): StoredRecord {
  return {
    collection: record.collection,
    id: record.id,
    version: record.version,
    deleted: record.deleted,
    fields: record.fields,
    conflicts: record.conflicts,
    pendingFields: [],
    serverFields: {},
    updatedAt: 0,
  };
}

function percentile(values: number[], p: number): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))] ?? 0;
}

const ms = (value: number) => `${value.toFixed(0).padStart(7)} ms`;

describe('first sync benchmark', () => {
  it(`stores a first sync of ${TOTAL} records beside a plain bulkPut`, async () => {
    const records = clinicRecords(TOTAL);

    const rawDb = new FuselightDb(`bench-raw-${process.pid}`);
    const rows = records.map(asStored);
    const rawStarted = performance.now();
    await rawDb.records.bulkPut(rows);
    const rawMs = performance.now() - rawStarted;
    expect(await rawDb.records.count()).toBe(TOTAL);
    rawDb.close();
    await rawDb.delete();

    const db = new FuselightDb(`bench-sync-${process.pid}`);
    // Loaded before the sync, as the app has it by then: keeping it current is the sync's cost.
    await db.patientDirectory.whenReady();
    let longestGapMs = 0;
    const gaps: number[] = [];
    let lastYield = performance.now();
    const engine = new SyncEngine({
      db,
      baseUrl: 'http://clinic.bench',
      auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
      deviceId: DEVICE,
      pullAs: () => USER,
      fetch: (input, init) => fetchPages(input, init),
      clock: { now: () => Date.now() },
      network: { isOnline: () => true, subscribe: () => () => undefined },
      pageLimit: PAGE,
      ...(CHUNK === null ? {} : { chunkSize: CHUNK }),
      yieldToUi: async () => {
        const now = performance.now();
        gaps.push(now - lastYield);
        longestGapMs = Math.max(longestGapMs, now - lastYield);
        await yieldToScreen();
        lastYield = performance.now();
      },
    });
    const fetchPages = pagesFetch(records);
    const started = performance.now();
    lastYield = started;
    const outcome = await engine.syncOnce();
    const syncMs = performance.now() - started;
    longestGapMs = Math.max(longestGapMs, performance.now() - lastYield);
    engine.stop();
    expect(outcome, JSON.stringify(outcome)).toMatchObject({ kind: 'synced', pulled: TOTAL });
    expect(await db.records.count()).toBe(TOTAL);
    const directory = db.patientDirectory.stats();
    expect(directory.patients).toBe(Math.ceil(TOTAL / 5));
    const t = engine.lastTimings!;
    db.close();
    await db.delete();

    // The same rows again in 1000-row bulkPuts (the engine's chunk size), after the sync has
    // warmed everything up: the stricter comparison.
    const chunkedDb = new FuselightDb(`bench-raw-chunked-${process.pid}`);
    const chunkedStarted = performance.now();
    for (let i = 0; i < rows.length; i += 1000)
      await chunkedDb.records.bulkPut(rows.slice(i, i + 1000));
    const rawChunkedMs = performance.now() - chunkedStarted;
    chunkedDb.close();
    await chunkedDb.delete();

    const ratio = syncMs / rawMs;
    const lines = [
      `first sync of ${TOTAL} records (${t.pages} pages of ${PAGE}) on fake-indexeddb`,
      `  plain Dexie bulkPut of the same rows ${ms(rawMs)}`,
      `  plain bulkPut in 1000-row chunks     ${ms(rawChunkedMs)}`,
      `  engine first sync                    ${ms(syncMs)}   (${ratio.toFixed(2)}× one bulkPut, ${(syncMs / rawChunkedMs).toFixed(2)}× chunked)`,
      `  where the sync's time goes:`,
      `    waiting for pages (in-memory wire)  ${ms(t.fetchMs)}`,
      `      JSON parse, all pages            ${ms(t.parseMs)}   (counted above only where not hidden behind writes)`,
      `    page validation                    ${ms(t.validateMs)}`,
      `    read existing records (bulkGet)    ${ms(t.readMs)}`,
      `    merge with pending local edits     ${ms(t.mergeMs)}`,
      `    records written                    ${ms(t.writeMs)}`,
      `    cursor and clock asked             ${ms(t.cursorMs)}`,
      `    yielding to the screen             ${ms(t.yieldMs)}`,
      `    other (transactions, progress)     ${ms(syncMs - t.fetchMs - t.validateMs - t.readMs - t.mergeMs - t.writeMs - t.cursorMs - t.yieldMs)}`,
      `      of which the patient directory kept current   ${ms(directory.applyMs)}   (${directory.patients} patients)`,
      `  longest stretch without yielding     ${ms(longestGapMs)}   (${gaps.length} yields; stretches p50 ${percentile(gaps, 0.5).toFixed(0)} ms, p95 ${percentile(gaps, 0.95).toFixed(0)} ms, ${gaps.filter((gap) => gap > 50).length} over 50 ms)`,
    ];
    console.log(lines.join('\n'));
  });
});
