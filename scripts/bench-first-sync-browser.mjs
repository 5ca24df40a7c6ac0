#!/usr/bin/env node
// The browser half of the first-sync benchmark: the real sync engine (pwa/src/sync, pwa/src/data)
// bundled by Vite into a page of its own (pwa/bench/), run in Debian's Chromium on a real
// IndexedDB. This script serves the page and a local pull endpoint with 50,000 generated records
// (the pages serialised before the clock starts: that is the server's work), and the page times
// the engine's first sync beside plain Dexie bulkPuts (one call, and in 1,000-row chunks) of the
// same rows, watching requestAnimationFrame and long tasks for responsiveness. Each measurement
// runs in a browser of its own with a fresh profile (IndexedDB's store gets slower as earlier
// runs' data is compacted away, which would favour whichever ran first). Figures are printed,
// not asserted.
//   node scripts/bench-first-sync-browser.mjs [--records 50000] [--chunk <engine chunk size>]
/* global window, document -- code run inside the page */
import { randomUUID } from 'node:crypto';
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { createServer } from 'node:http';
import { tmpdir } from 'node:os';
import { extname, join, normalize, resolve } from 'node:path';
import { chromium } from 'playwright-core';
import { build } from 'vite';

const root = resolve(import.meta.dirname, '..');
const args = process.argv.slice(2);
const option = (name, fallback) => {
  const i = args.indexOf(name);
  return i === -1 ? fallback : Number(args[i + 1]);
};
const TOTAL = option('--records', Number(process.env.FUSELIGHT_BENCH_RECORDS ?? 50_000));
const CHUNK = option('--chunk', null);
const PAGE = 1000;
const RAW_CHUNK = 1000;
const SITE = '0190c6a0-0000-7000-8000-00000000a001';
const USER = '0190c6a0-0000-7000-8000-00000000d001';
const DEVICE = '0190c6a0-0000-7000-8000-0000000de001';

// A clinic as in conflict-tests/bench/first-sync.bench-run.ts: one patient in five, a visit per
// patient, three sections per visit.
function clinicRecords(total) {
  const records = [];
  let version = 0;
  const stamp = (v) => ({
    hlc: `${String(1_764_576_000_000 + v).padStart(15, '0')}-00000-${DEVICE}`,
    version: v,
    by: USER,
    device: DEVICE,
  });
  while (records.length < total) {
    const patientId = randomUUID();
    const visitId = randomUUID();
    const n = records.length;
    const made = [
      [
        'patient',
        patientId,
        {
          siteId: SITE,
          givenName: `Given${n}`,
          familyName: `Family${n}`,
          dateOfBirth: '2015-03-0' + ((n % 9) + 1),
          clinicNumber: `FL-${n}`,
        },
      ],
      [
        'visit',
        visitId,
        {
          siteId: SITE,
          patientId,
          date: '2026-11-30',
          clinicianId: USER,
          status: 'signed',
          reason: 'Review',
        },
      ],
      [
        'plan',
        randomUUID(),
        { siteId: SITE, patientId, visitId, impression: 'Stable', management: ['review'] },
      ],
      ['visualAcuity', randomUUID(), { siteId: SITE, patientId, visitId, skippedReason: null }],
      ['coverTest', randomUUID(), { siteId: SITE, patientId, visitId, skippedReason: null }],
    ];
    for (const [collection, id, fields] of made) {
      if (records.length >= total) break;
      version += 1;
      const v = version;
      records.push({
        collection,
        id,
        version: v,
        deleted: false,
        fields,
        stamps: Object.fromEntries(Object.keys(fields).map((field) => [field, stamp(v)])),
        conflicts: [],
      });
    }
  }
  return records;
}

function pageBody(records, after, limit) {
  const start = records.findIndex((record) => record.version > after);
  const page = start < 0 ? [] : records.slice(start, start + limit);
  const cursor = page.at(-1)?.version ?? after;
  const more = start >= 0 && start + limit < records.length;
  return JSON.stringify({ records: page, cursor, more });
}

const records = clinicRecords(TOTAL);
const pages = new Map();
for (let start = 0; start < records.length; start += PAGE) {
  const after = start === 0 ? 0 : records[start - 1].version;
  pages.set(`${after}/${PAGE}`, pageBody(records, after, PAGE));
}
const rowsBody = JSON.stringify(
  records.map((record) => ({
    collection: record.collection,
    id: record.id,
    version: record.version,
    deleted: record.deleted,
    fields: record.fields,
    conflicts: record.conflicts,
    pendingFields: [],
    serverFields: {},
    updatedAt: 0,
  })),
);

const outDir = mkdtempSync(join(tmpdir(), 'fl-bench-first-sync-'));
await build({
  configFile: join(root, 'pwa', 'bench', 'vite.config.ts'),
  build: { outDir },
});

const TYPES = { '.html': 'text/html; charset=utf-8', '.js': 'text/javascript' };
const server = createServer((req, res) => {
  const url = new URL(req.url ?? '/', 'http://bench');
  const json = (status, body) => {
    res.writeHead(status, { 'content-type': 'application/json', 'cache-control': 'no-store' });
    res.end(body);
  };
  if (url.pathname === '/api/sync/pull') {
    if (req.headers.authorization !== 'Bearer bench-token') return json(401, '{}');
    const after = Number(url.searchParams.get('after') ?? 0);
    const limit = Number(url.searchParams.get('limit') ?? PAGE);
    return json(200, pages.get(`${after}/${limit}`) ?? pageBody(records, after, limit));
  }
  if (url.pathname === '/bench/rows.json') return json(200, rowsBody);
  const file = normalize(join(outDir, url.pathname === '/' ? 'first-sync.html' : url.pathname));
  if (!file.startsWith(outDir) || !existsSync(file) || statSync(file).isDirectory()) {
    res.writeHead(404);
    res.end();
    return;
  }
  res.writeHead(200, { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream' });
  res.end(readFileSync(file));
});
await new Promise((done) => server.listen(0, '127.0.0.1', done));
const origin = `http://127.0.0.1:${server.address().port}`;

const launchArgs = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];
const options = {
  total: TOTAL,
  pageLimit: PAGE,
  chunkSize: CHUNK,
  rawChunk: RAW_CHUNK,
  userId: USER,
  deviceId: DEVICE,
};

/** One measurement in a fresh Chromium profile; returns the page's figures. */
async function measure(run) {
  const userDataDir = mkdtempSync(join(tmpdir(), 'fl-bench-first-sync-profile-'));
  const context = await chromium.launchPersistentContext(userDataDir, {
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    viewport: { width: 1280, height: 800 },
    args: launchArgs,
  });
  try {
    const page = await context.newPage();
    page.on('pageerror', (error) => console.error(`page error: ${error.message}`));
    await page.goto(`${origin}/first-sync.html`);
    await page.waitForFunction(() => document.getElementById('status')?.textContent === 'ready');
    const figures = await page.evaluate(
      ([which, given]) => window.runFirstSyncBench(which, given),
      [run, options],
    );
    return { ...figures, browser: (await context.browser()?.version()) ?? 'Chromium' };
  } finally {
    await context.close();
    rmSync(userDataDir, { recursive: true, force: true });
  }
}

const ms = (value) => `${value.toFixed(0).padStart(7)} ms`;
const screen = (s) =>
  `frames ${s.frames}, longest frame gap ${s.longestFrameGapMs.toFixed(0)} ms, ` +
  `longest task ${s.longestTaskMs.toFixed(0)} ms (${s.longTasks} over 50 ms, ${s.blockingMs.toFixed(0)} ms blocking)`;

let failed = false;
try {
  const rawOneCall = await measure('raw-one-call');
  const sync = await measure('sync');
  const rawChunked = await measure('raw-chunked');
  // The same sync on a protected tablet: every stored value sealed (AES-GCM, WebCrypto).
  const sealed = await measure('sync-sealed');
  if (sealed.records !== TOTAL || sealed.sealedRecords !== TOTAL) {
    failed = true;
    console.error(
      `the sealed sync stored ${sealed.records} records, ${sealed.sealedRecords} of them sealed`,
    );
  }
  const t = sync.timings;
  if (sync.records !== TOTAL || sync.directoryPatients !== Math.ceil(TOTAL / 5)) {
    failed = true;
    console.error(
      `the sync stored ${sync.records} records; the patient directory holds ${sync.directoryPatients} patients`,
    );
  }
  const known =
    t.fetchMs + (t.validateMs ?? 0) + t.readMs + t.mergeMs + t.writeMs + t.cursorMs + t.yieldMs;
  console.log(
    [
      `first sync of ${TOTAL} records (${t.pages} pages of ${PAGE}) in Chromium ${sync.browser} on IndexedDB`,
      `  plain Dexie bulkPut of the same rows ${ms(rawOneCall.ms)}   ${screen(rawOneCall.screen)}`,
      `  plain bulkPut in ${RAW_CHUNK}-row chunks     ${ms(rawChunked.ms)}   ${screen(rawChunked.screen)}`,
      `  engine first sync                    ${ms(sync.ms)}   (${(sync.ms / rawOneCall.ms).toFixed(2)}× one bulkPut, ${(sync.ms / rawChunked.ms).toFixed(2)}× chunked)`,
      `    ${screen(sync.screen)}`,
      `    ${sync.outcome}`,
      `  engine first sync, sealed (protected tablet) ${ms(sealed.ms)}   (${(sealed.ms / rawOneCall.ms).toFixed(2)}× one plain bulkPut; aim at most 1.5×; ${sealed.sealedRecords} records sealed)`,
      `    ${screen(sealed.screen)}`,
      `    sealing and opening values (the rest as above): read ${ms(sealed.timings.readMs)}, written ${ms(sealed.timings.writeMs)}`,
      `  where the (plain) sync's time goes:`,
      `    waiting for pages (local HTTP)      ${ms(t.fetchMs)}`,
      `      JSON parse, all pages            ${ms(t.parseMs)}   (counted above only where not hidden behind writes)`,
      `    page validation                    ${ms(t.validateMs ?? 0)}`,
      `    read existing records (bulkGet)    ${ms(t.readMs)}`,
      `    merge with pending local edits     ${ms(t.mergeMs)}`,
      `    records written                    ${ms(t.writeMs)}`,
      `    cursor and clock asked             ${ms(t.cursorMs)}`,
      `    yielding to the screen             ${ms(t.yieldMs)}`,
      `    other (transactions, commits)      ${ms(sync.ms - known)}`,
      `      of which the patient directory kept current   ${ms(sync.directoryApplyMs)}   (${sync.directoryPatients} patients)`,
    ].join('\n'),
  );
} catch (error) {
  failed = true;
  console.error(error instanceof Error ? error.message : String(error));
} finally {
  server.close();
  rmSync(outDir, { recursive: true, force: true });
}
process.exit(failed ? 1 : 0);
