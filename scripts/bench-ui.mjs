#!/usr/bin/env node
// `npm run bench:ui`: the production PWA build served by a small static server, in Debian's
// Chromium. Prints (does not assert):
//   - cold start to an interactive Today screen with the network off (service worker cache);
//   - the patient directory (the search, held in memory): its load time for 20,000 patients after
//     Today is interactive, the longest task meanwhile, and the page's JS heap after garbage
//     collection with those patients held beside the same page with none;
//   - local patient search latency over 20,000 patients through the Today screen (typed query to
//     its own results in the DOM, as a mutation observer sees the commit; and to the next
//     animation frame, which paints them), beside a bare Dexie indexed prefix query over the same
//     patients' terms (a database of its own, since the app keeps no search index) followed by a
//     bulkGet of their records from the app's database, measured in the same run;
//   - layout shifts while Today fills in, with what moved;
//   - Lighthouse on /signin and on Today (see printLighthouse);
//   - the same tablet protected: setting a PIN seals every patient in place, then each run
//     reloads it locked and times Unlock → an interactive Today, and → the patient search loaded.
// The tablet's session and the patients are written straight into IndexedDB with Dexie (its
// UMD build injected into the page), in the shapes the app's own stores use.
//   node scripts/bench-ui.mjs [--no-build] [--no-lighthouse] [--no-unlock] [--patients 20000] [--runs 7]
//                             [--searches 15] [--lighthouse-runs 3] [--lighthouse-pages signin,today]
/* global window, document, HTMLInputElement, MutationObserver, requestAnimationFrame -- code run inside the page */
import { spawn, spawnSync } from 'node:child_process';
import {
  copyFileSync,
  createReadStream,
  existsSync,
  mkdtempSync,
  readFileSync,
  statSync,
} from 'node:fs';
import { createServer } from 'node:http';
import { tmpdir } from 'node:os';
import { extname, join, normalize, resolve } from 'node:path';
import { createGzip } from 'node:zlib';
import { computeMedianRun } from 'lighthouse/core/lib/median-run.js';
import { chromium } from 'playwright-core';
import { chromiumPath } from './lib.mjs';

const root = resolve(import.meta.dirname, '..');
const dist = join(root, 'pwa', 'dist');
const args = process.argv.slice(2);
const option = (name, fallback) => {
  const i = args.indexOf(name);
  return i === -1 ? fallback : Number(args[i + 1]);
};
const PATIENTS = option('--patients', 20_000);
const RUNS = option('--runs', 7);
const SEARCHES = option('--searches', 15);
// Lighthouse's figures vary from run to run; each page is measured this many times and the run
// Lighthouse's own computeMedianRun picks (nearest the median first paint and interactive) is
// printed, with every run's performance score beside it.
const LIGHTHOUSE_RUNS = option('--lighthouse-runs', 3);
// --lighthouse-pages today (or signin) measures one page only, for comparing builds.
const LIGHTHOUSE_PAGES = args.includes('--lighthouse-pages')
  ? args[args.indexOf('--lighthouse-pages') + 1].split(',')
  : ['signin', 'today'];

if (!args.includes('--no-build')) {
  const built = spawnSync('npm', ['run', 'build', '-w', 'pwa', '--silent'], {
    cwd: root,
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  if (built.status !== 0) throw new Error('npm run build -w pwa failed');
}
if (!existsSync(join(dist, 'index.html'))) throw new Error(`No build in ${dist}`);

const TYPES = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript',
  '.css': 'text/css',
  '.json': 'application/json',
  '.webmanifest': 'application/manifest+json',
  '.png': 'image/png',
  '.svg': 'image/svg+xml',
  '.woff2': 'font/woff2',
  '.map': 'application/json',
};

// Static files with the single-page fallback; /api answers 503 (no clinic server here), or,
// for Lighthouse, is unreachable as for a tablet out of the clinic's network. Text is gzipped
// and hashed assets are cacheable for a year, as the clinic server sends them.
let apiUnreachable = false;
const COMPRESSED = new Set(['.html', '.js', '.css', '.json', '.webmanifest', '.svg', '.map']);
const server = createServer((req, res) => {
  const path = decodeURIComponent(new URL(req.url ?? '/', 'http://x').pathname);
  if (path.startsWith('/api/')) {
    if (apiUnreachable) {
      req.socket.destroy();
      return;
    }
    res.writeHead(503, { 'content-type': 'application/json' });
    res.end('{"message":"no clinic server in the UI benchmark"}');
    return;
  }
  let file = normalize(join(dist, path));
  if (!file.startsWith(dist) || !existsSync(file) || statSync(file).isDirectory()) {
    file = join(dist, 'index.html');
  }
  const gzip =
    COMPRESSED.has(extname(file)) && /\bgzip\b/.test(String(req.headers['accept-encoding'] ?? ''));
  res.writeHead(200, {
    'content-type': TYPES[extname(file)] ?? 'application/octet-stream',
    'cache-control': file.startsWith(join(dist, 'assets'))
      ? 'public, max-age=31536000, immutable'
      : 'no-cache',
    vary: 'Accept-Encoding',
    ...(gzip ? { 'content-encoding': 'gzip' } : {}),
  });
  const stream = createReadStream(file);
  if (gzip) stream.pipe(createGzip()).pipe(res);
  else stream.pipe(res);
});
await new Promise((done) => server.listen(0, '127.0.0.1', done));
const origin = `http://127.0.0.1:${server.address().port}`;

const profileDir = mkdtempSync(join(tmpdir(), 'fl-bench-ui-'));
const browserOptions = {
  executablePath: chromiumPath(),
  headless: true,
  viewport: { width: 1280, height: 800 },
  args: [
    '--headless',
    '--no-sandbox',
    '--disable-gpu',
    '--disable-quic',
    '--no-first-run',
    '--disable-background-networking',
    '--disable-component-update',
    '--disable-sync',
  ],
};
const context = await chromium.launchPersistentContext(profileDir, browserOptions);

const SITE = '0190c6a0-0000-7000-8000-00000000b001';
const USER = {
  id: '0190c6a0-0000-7000-8000-00000000b0c1',
  name: 'Bench Clinician',
  email: 'bench@example.test',
  role: 'orthoptist',
  siteIds: [SITE],
};

const median = (values) => {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
};
const fmt = (ms) => `${ms.toFixed(1)} ms`;
const mb = (bytes) => `${(bytes / 1024 / 1024).toFixed(1)} MB`;
const DIRECTORY_LOAD = 'fuselight:patient-directory-load';

/** When Today became interactive (page time): the search box enabled and the day's list shown. */
async function todayInteractiveAt(page, timeout) {
  const at = await page.waitForFunction(
    () => {
      const box = document.querySelector('input[type="search"]');
      const list = document.body.innerText.includes('No visits booked or seen today');
      return box && !box.disabled && list ? performance.now() : false;
    },
    undefined,
    { polling: 'raf', timeout },
  );
  return at.jsonValue();
}

/** The User Timing entry of the patient directory's load, once there is one. */
async function directoryLoad(page) {
  const entry = await page.waitForFunction(
    (name) => {
      const [found] = performance.getEntriesByName(name);
      return found
        ? { start: found.startTime, ms: found.duration, patients: found.detail?.patients ?? null }
        : false;
    },
    DIRECTORY_LOAD,
    { timeout: 60_000, polling: 50 },
  );
  return entry.jsonValue();
}

/** The page's JS heap in use after a full garbage collection (Chromium's DevTools protocol). */
async function heapAfterGc(page) {
  const cdp = await page.context().newCDPSession(page);
  try {
    await cdp.send('HeapProfiler.enable');
    await cdp.send('HeapProfiler.collectGarbage');
    await cdp.send('HeapProfiler.collectGarbage');
    const { usedSize } = await cdp.send('Runtime.getHeapUsage');
    return usedSize;
  } finally {
    await cdp.detach();
  }
}

try {
  // 1. First online visit: the service worker precaches the shell; the app creates its stores.
  const page = await context.newPage();
  await page.goto(origin);
  await page.evaluate(async () => {
    await navigator.serviceWorker.ready;
  });
  await page.addScriptTag({ path: join(root, 'node_modules', 'dexie', 'dist', 'dexie.js') });

  // 2. A signed-in person on an enrolled tablet, and the patients, written with Dexie.
  await page.evaluate(
    async ({ user, site }) => {
      const Dexie = window.Dexie;
      const auth = new Dexie('fuselight-auth');
      auth.version(1).stores({ tablet: 'key', people: 'userId', pins: 'userId', settings: 'key' });
      const now = Date.now();
      await auth.table('tablet').put({
        key: 'tablet',
        deviceId: '0190c6a0-0000-7000-8000-0000000be001',
        deviceSecret: 'bench-secret',
        enrolledAt: now,
        state: 'active',
      });
      await auth.table('people').put({
        userId: user.id,
        user,
        accessToken: 'bench-offline-token',
        accessExpiresAt: now + 3_600_000,
        refreshToken: null,
        confirmedAt: now,
        signInRequired: null,
        activeSiteId: site,
      });
      await auth.table('settings').put({ key: 'activeUserId', value: user.id });
      auth.close();
    },
    { user: USER, site: SITE },
  );
  // With a person signed in, Today opens the records database in the app's own schema. The
  // network is off from here on: with no clinic server, a status check would end the session.
  await context.setOffline(true);
  await page.goto(`${origin}/today`);
  await page.waitForSelector('input[type="search"]');
  await page.getByText('No visits booked or seen today').waitFor();
  await page.addScriptTag({ path: join(root, 'node_modules', 'dexie', 'dist', 'dexie.js') });
  // The same screen holding no patients: the heap figure's baseline.
  const emptyLoad = await directoryLoad(page);
  const emptyHeap = await heapAfterGc(page);
  await page.evaluate(
    async ({ site, count }) => {
      const Dexie = window.Dexie;
      const now = Date.now();

      const records = new Dexie('fuselight');
      // Open whatever version the app created, without declaring a schema of our own.
      await records.open();
      const given = [
        'Ada',
        'Bram',
        'Cleo',
        'Dario',
        'Esme',
        'Fenn',
        'Gwen',
        'Hugo',
        'Iris',
        'Jude',
      ];
      const family = ['Alder', 'Birch', 'Cedar', 'Dunmore', 'Elwood', 'Fairley', 'Garth', 'Hollin'];
      const rows = [];
      const terms = [];
      for (let i = 0; i < count; i += 1) {
        const id = `0190c6a1-0000-7000-8000-${i.toString(16).padStart(12, '0')}`;
        const g = given[i % given.length];
        const f = `${family[i % family.length]}${i}`;
        const dob = `${1940 + (i % 80)}-${String((i % 12) + 1).padStart(2, '0')}-${String((i % 28) + 1).padStart(2, '0')}`;
        const fields = {
          siteId: site,
          givenName: g,
          familyName: f,
          dateOfBirth: dob,
          clinicNumber: `BN-${i}`,
        };
        rows.push({
          collection: 'patient',
          id,
          version: 1,
          deleted: false,
          fields,
          conflicts: [],
          pendingFields: [],
          serverFields: {},
          updatedAt: now,
        });
        // The terms the app's directory makes of these fields (patient-terms.ts).
        terms.push({ id, terms: [g.toLowerCase(), f.toLowerCase(), `bn-${i}`, dob] });
      }
      await records.table('records').bulkPut(rows);
      records.close();
      // The bare query's own index: the same terms in a multi-entry index, as a persisted
      // search table would hold them.
      const bare = new Dexie('fuselight-bench-bare');
      bare.version(1).stores({ patients: 'id, *terms' });
      await bare.table('patients').bulkPut(terms);
      bare.close();
    },
    { site: SITE, count: PATIENTS },
  );
  await page.close();

  // 3. Cold start offline: a new page load served by the service worker, until Today's search
  //    box is enabled and today's list has rendered.
  await context.setOffline(true);
  const starts = [];
  for (let i = 0; i < RUNS; i += 1) {
    const p = await context.newPage();
    if (i === RUNS - 1) {
      // The last page also notes long tasks, to see what the directory's load costs the screen.
      await p.addInitScript(() => {
        window.benchLongTasks = [];
        new PerformanceObserver((list) => {
          for (const entry of list.getEntries()) {
            window.benchLongTasks.push({ start: entry.startTime, ms: entry.duration });
          }
        }).observe({ type: 'longtask', buffered: true });
        // And layout shifts, with what moved: the screen must not jump while it fills in.
        window.benchShifts = [];
        new PerformanceObserver((list) => {
          for (const entry of list.getEntries()) {
            if (entry.hadRecentInput) continue;
            const moved = (entry.sources ?? []).map((source) => {
              const node = source.node;
              if (!node || node.nodeType !== 1) return '?';
              const classes =
                node.className && typeof node.className === 'string' ? node.className : '';
              return `${node.tagName.toLowerCase()}${classes ? '.' + classes.trim().split(/\s+/).slice(0, 2).join('.') : ''}`;
            });
            window.benchShifts.push({ at: entry.startTime, value: entry.value, moved });
          }
        }).observe({ type: 'layout-shift', buffered: true });
      });
    }
    await p.goto(`${origin}/today`);
    const at = await todayInteractiveAt(p, 30_000);
    starts.push(at);
    if (i < RUNS - 1) await p.close();
    else {
      // 4. The patient directory loads in idle time once Today is up: its time, the longest
      //    task meanwhile, and the heap it takes (against the same screen with no patients).
      await p.addScriptTag({ path: join(root, 'node_modules', 'dexie', 'dist', 'dexie.js') });
      const load = await directoryLoad(p);
      const interactiveAt = starts.at(-1);
      const loadTasks = await p.evaluate(
        ({ start, end }) =>
          window.benchLongTasks.filter((task) => task.start < end && task.start + task.ms > start),
        { start: load.start, end: load.start + load.ms },
      );
      const fullHeap = await heapAfterGc(p);
      const shifts = await p.evaluate(() => window.benchShifts);

      // 5. Search latency: type a query, time until its results are listed; beside it the bare
      //    Dexie query for the same text, run in the same page right before or after it.
      const typeAndWait = (query) =>
        p.evaluate(async (typed) => {
          const box = document.querySelector('input[type="search"]');
          const setValue = Object.getOwnPropertyDescriptor(HTMLInputElement.prototype, 'value').set;
          setValue.call(box, '');
          box.dispatchEvent(new Event('input', { bubbles: true }));
          await new Promise((r) => setTimeout(r, 100));
          // Done when this query's results are listed: the list is not empty, every row matches
          // what was typed (not the previous query's rows kept on screen meanwhile) and the
          // status line says how many were found.
          const listed = () => {
            const list = document.querySelector('[aria-label="Search results"]');
            const status = document.querySelector('.flc-status')?.textContent ?? '';
            const rows = list ? [...list.children] : [];
            return (
              rows.length > 0 &&
              rows.every((row) => (row.textContent ?? '').toLowerCase().includes(typed)) &&
              /found$/.test(status)
            );
          };
          // A mutation observer notes the moment the app's commit puts them in the DOM; the
          // frame that paints them follows.
          let observer;
          const inDom = new Promise((resolve, reject) => {
            observer = new MutationObserver(() => {
              if (listed()) resolve(performance.now());
            });
            observer.observe(document.body, {
              childList: true,
              subtree: true,
              characterData: true,
              attributes: true,
            });
            setTimeout(() => reject(new Error(`no results for ${typed}`)), 10_000);
          });
          const t0 = performance.now();
          setValue.call(box, typed);
          box.dispatchEvent(new Event('input', { bubbles: true }));
          const domAt = listed() ? performance.now() : await inDom;
          observer.disconnect();
          await new Promise((r) => requestAnimationFrame(r));
          return [domAt - t0, performance.now() - t0];
        }, query);
      // The bare query: Dexie's indexed prefix read of 30 rows of the same patients' terms, then
      // their records from the app's database, with no screen, no query cache and no rendering.
      const bareQuery = (query) =>
        p.evaluate(async (q) => {
          const db = (window.benchDb ??= new window.Dexie('fuselight'));
          if (!db.isOpen()) await db.open();
          let bare = window.benchBare;
          if (!bare) {
            bare = window.benchBare = new window.Dexie('fuselight-bench-bare');
            bare.version(1).stores({ patients: 'id, *terms' });
          }
          if (!bare.isOpen()) await bare.open();
          await new Promise((r) => setTimeout(r, 100));
          const t0 = performance.now();
          const rows = await bare
            .table('patients')
            .where('terms')
            .startsWith(q)
            .limit(30)
            .toArray();
          const found = await db.table('records').bulkGet(rows.map((r) => ['patient', r.id]));
          const ms = performance.now() - t0;
          if (found.length === 0 || found.some((record) => !record)) {
            throw new Error(`the bare query found no records for ${q}`);
          }
          return ms;
        }, query);
      // Measurement hygiene, so that the ratio compares the two reads and not the machine's
      // moment: one untimed warm-up of each first (the first call of either pays for compiling
      // its code and opening its connection); each query then runs through both, the bare
      // query first for every other one, so neither always finds IndexedDB's cache warmed by the
      // other; and more queries than cold starts, because one busy moment on a shared two-core
      // machine moves a median of seven by several milliseconds. No query text is repeated: the
      // screen would answer a repeat from its query cache.
      const probes = [
        'hollin7',
        'bn-1234',
        'gwen',
        'cedar19',
        'bn-9999',
        'esme',
        'dunmore15',
        'iris',
        'bn-777',
        'birch3',
        'fairley11',
        'ada',
        'elwood2',
        'garth40',
        'hugo',
      ].slice(0, SEARCHES);
      await typeAndWait('jude');
      await bareQuery('jude');
      const ui = [];
      const frames = [];
      const bare = [];
      for (const [i, query] of probes.entries()) {
        if (i % 2 === 1) bare.push(await bareQuery(query));
        const [dom, frame] = await typeAndWait(query);
        ui.push(dom);
        frames.push(frame);
        if (i % 2 === 0) bare.push(await bareQuery(query));
      }
      await p.evaluate(() => {
        window.benchDb.close();
        window.benchBare.close();
      });
      const count = await p.evaluate(async () => {
        const { Dexie } = window;
        const db = new Dexie('fuselight');
        await db.open();
        const n = await db
          .table('records')
          .where('[collection+id]')
          .between(['patient', Dexie.minKey], ['patient', Dexie.maxKey])
          .count();
        db.close();
        return n;
      });
      console.log(
        `Fuselight UI benchmark (production build, Chromium, ${count} patients on the tablet)`,
      );
      console.log(
        `  cold start to an interactive Today screen, offline: median ${fmt(median(starts))} (runs: ${starts.map(fmt).join(', ')})`,
      );
      console.log(
        `  patient directory load (${load.patients} patients): ${fmt(load.ms)}, starting ${fmt(load.start - interactiveAt)} after Today was interactive; ` +
          `${loadTasks.length} long tasks meanwhile${loadTasks.length > 0 ? `, longest ${fmt(Math.max(...loadTasks.map((t) => t.ms)))}` : ''}`,
      );
      console.log(
        `  JS heap after GC: ${mb(fullHeap)} holding ${load.patients} patients, ${mb(emptyHeap)} with ${emptyLoad.patients} (the directory and its records: ≈ ${mb(fullHeap - emptyHeap)})`,
      );
      const shiftTotal = shifts.reduce((sum, shift) => sum + shift.value, 0);
      console.log(
        `  layout shift during cold start and the directory's load: ${shiftTotal.toFixed(3)}` +
          (shifts.length > 0
            ? ` (${shifts
                .sort((a, b) => b.value - a.value)
                .slice(0, 3)
                .map(
                  (shift) =>
                    `${shift.value.toFixed(3)} at ${shift.at.toFixed(0)} ms moving ${shift.moved.join(', ') || '?'}`,
                )
                .join('; ')})`
            : ''),
      );
      console.log(
        `  Today search, typed query to results in the DOM:    median ${fmt(median(ui))} (runs: ${ui.map(fmt).join(', ')})`,
      );
      console.log(
        `    … to the next animation frame (paint):           median ${fmt(median(frames))} (runs: ${frames.map(fmt).join(', ')})`,
      );
      console.log(
        `  bare Dexie prefix query + record fetch (30 rows):    median ${fmt(median(bare))} (runs: ${bare.map(fmt).join(', ')})`,
      );
      console.log(
        `  ratio (Today search / bare query): ${(median(ui) / median(bare)).toFixed(2)}×  (aim ≤ 2×)`,
      );
    }
  }
} finally {
  await context.close();
}

// Lighthouse: the scores and timings of a first visit to /signin, and of Today on the tablet
// enrolled above (its profile, storage kept), against the aims.
const AIMS = { performance: 90, accessibility: 100, 'best-practices': 95 };
const TIMINGS = [
  ['first-contentful-paint', 'first contentful paint'],
  ['largest-contentful-paint', 'largest contentful paint'],
  ['interactive', 'time to interactive'],
  ['total-blocking-time', 'total blocking time'],
  ['cumulative-layout-shift', 'layout shift'],
];

let keptReports = 0;

async function lighthouseRun(url, { profile } = {}) {
  const out = join(mkdtempSync(join(tmpdir(), 'fl-lighthouse-')), 'report.json');
  const chromeFlags = [
    '--headless=new',
    '--no-sandbox',
    '--disable-gpu',
    '--no-first-run',
    '--disable-background-networking',
    '--disable-component-update',
    '--disable-sync',
    ...(profile ? [`--user-data-dir=${profile}`] : []),
  ];
  // Beside this process's static server (a synchronous spawn would stop it answering).
  const child = spawn(
    process.execPath,
    [
      join(root, 'node_modules', 'lighthouse', 'cli', 'index.js'),
      url,
      '--only-categories=performance,accessibility,best-practices',
      '--output=json',
      `--output-path=${out}`,
      '--quiet',
      `--chrome-flags=${chromeFlags.join(' ')}`,
      ...(profile ? ['--disable-storage-reset'] : []),
    ],
    { cwd: root, env: { ...process.env, CHROME_PATH: chromiumPath() } },
  );
  let output = '';
  child.stdout.on('data', (chunk) => (output += chunk));
  child.stderr.on('data', (chunk) => (output += chunk));
  const status = await new Promise((done) => child.on('exit', done));
  if (status !== 0 || !existsSync(out)) {
    throw new Error(`Lighthouse failed on ${url}: ${output.trim().slice(-400)}`);
  }
  // FUSELIGHT_LIGHTHOUSE_REPORTS=<dir> keeps each full report there, to read its audits.
  if (process.env.FUSELIGHT_LIGHTHOUSE_REPORTS) {
    keptReports += 1;
    const kept = join(
      process.env.FUSELIGHT_LIGHTHOUSE_REPORTS,
      `${new URL(url).pathname.slice(1)}-${keptReports}.json`,
    );
    copyFileSync(out, kept);
    console.log(`  (report kept: ${kept})`);
  }
  return JSON.parse(readFileSync(out, 'utf8'));
}

async function lighthousePage(name, url, options) {
  const reports = [];
  for (let i = 0; i < LIGHTHOUSE_RUNS; i += 1) reports.push(await lighthouseRun(url, options));
  printLighthouse(name, computeMedianRun(reports), reports);
}

function printLighthouse(name, report, reports) {
  console.log(
    `  Lighthouse ${report.lighthouseVersion} on ${name} (mobile, simulated throttling; ` +
      `the median of ${reports.length} run${reports.length === 1 ? '' : 's'}):`,
  );
  const score = (r, id) => Math.round((r.categories[id]?.score ?? 0) * 100);
  for (const [id, aim] of Object.entries(AIMS)) {
    const runs = reports.length > 1 ? `; runs: ${reports.map((r) => score(r, id)).join(', ')}` : '';
    console.log(
      `    ${report.categories[id]?.title ?? id}: ${score(report, id)} (aim ${aim === 100 ? '100' : `≥ ${aim}`}: ${score(report, id) >= aim ? 'met' : 'NOT met'}${runs})`,
    );
  }
  console.log(
    `    ${TIMINGS.map(([id, label]) => `${label} ${report.audits[id]?.displayValue ?? '?'}`).join(', ')}, ` +
      `${((report.audits['total-byte-weight']?.numericValue ?? 0) / 1024).toFixed(0)} KiB transferred`,
  );
  if (reports.length > 1) {
    const tbt = reports.map((r) => Math.round(r.audits['total-blocking-time']?.numericValue ?? 0));
    console.log(`    total blocking time per run: ${tbt.map((ms) => `${ms} ms`).join(', ')}`);
  }
  const failing = Object.values(report.audits)
    .filter((audit) => audit.scoreDisplayMode === 'binary' && audit.score === 0)
    .map((audit) => audit.id);
  if (failing.length > 0) console.log(`    audits not passed: ${failing.join(', ')}`);
}

const PIN = '604182';

/**
 * The same tablet protected (docs/threat-model.md): a PIN set on the You screen's PIN page seals
 * every patient in place; then each run reloads it (a protected tablet opens locked), types the
 * PIN and presses Unlock, timed from the press to an interactive Today and to the patient
 * search loaded. Offline, as an outreach tablet would be.
 */
async function protectedUnlock() {
  const protectedContext = await chromium.launchPersistentContext(profileDir, browserOptions);
  try {
    await protectedContext.setOffline(true);
    const pinPage = await protectedContext.newPage();
    await pinPage.goto(`${origin}/pin`);
    await pinPage.getByLabel('New PIN (at least 6 digits)').fill(PIN);
    await pinPage.getByLabel('The same PIN again').fill(PIN);
    const sealStart = performance.now();
    await pinPage.getByRole('button', { name: 'Save PIN' }).click();
    await pinPage.waitForURL((url) => !url.pathname.startsWith('/pin'), { timeout: 600_000 });
    const sealMs = performance.now() - sealStart;
    await pinPage.close();

    const toToday = [];
    const toSearch = [];
    for (let i = 0; i < RUNS; i += 1) {
      const p = await protectedContext.newPage();
      await p.goto(`${origin}/today`);
      await p.getByRole('button', { name: `Unlock as ${USER.name}` }).click();
      await p.getByLabel(`PIN for ${USER.name}`).fill(PIN);
      await p.evaluate(() => {
        document.addEventListener('submit', () => (window.benchUnlockAt = performance.now()), {
          capture: true,
          once: true,
        });
      });
      await p.getByRole('button', { name: 'Unlock', exact: true }).click();
      const at = await todayInteractiveAt(p, 60_000);
      const unlockAt = await p.evaluate(() => window.benchUnlockAt);
      toToday.push(at - unlockAt);
      const load = await directoryLoad(p);
      toSearch.push(load.start + load.ms - unlockAt);
      await p.close();
    }
    console.log(
      '  Protected tablet (key slot under a 6-digit PIN, every patient sealed), offline:',
    );
    console.log(`    setting the PIN, sealing every patient in place: ${fmt(sealMs)}`);
    console.log(
      `    Unlock pressed → interactive Today: median ${fmt(median(toToday))} (aim ≤ 1500 ms: ${median(toToday) <= 1500 ? 'met' : 'NOT met'}; runs: ${toToday.map(fmt).join(', ')})`,
    );
    console.log(
      `    Unlock pressed → patient search loaded (every patient unsealed): median ${fmt(median(toSearch))} (runs: ${toSearch.map(fmt).join(', ')})`,
    );
  } finally {
    await protectedContext.close();
  }
}

try {
  if (!args.includes('--no-lighthouse')) {
    apiUnreachable = true;
    if (LIGHTHOUSE_PAGES.includes('signin')) {
      await lighthousePage('/signin (first visit)', `${origin}/signin`);
    }
    if (LIGHTHOUSE_PAGES.includes('today')) {
      await lighthousePage('/today (enrolled tablet, signed in)', `${origin}/today`, {
        profile: profileDir,
      });
    }
    apiUnreachable = false;
  }
  // After Lighthouse, which measures the tablet unprotected.
  if (!args.includes('--no-unlock')) await protectedUnlock();
} finally {
  server.close();
}
