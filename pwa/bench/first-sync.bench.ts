// The first-sync benchmark page, run in Chromium by scripts/bench-first-sync-browser.mjs: the
// real sync engine pulls every page from the script's local pull endpoint into a real IndexedDB,
// beside plain Dexie bulkPuts of the same rows. While each runs, a requestAnimationFrame loop and
// a long-task observer say how responsive the screen stayed (the engine yields with its own
// default, as in the app). The patient directory (the search, in memory) is loaded before the
// sync starts, as the app has it by then, so keeping it current is part of the sync's time.
import { DataKeyVault } from '../src/data/crypto/data-key-vault';
import { newDataKey } from '../src/data/crypto/key-slots';
import { isSealed } from '../src/data/crypto/value-codec';
import { FuselightDb, type StoredRecord } from '../src/data/db';
import { SyncEngine, type SyncTimings } from '../src/sync/sync-engine';

export interface BenchOptions {
  total: number;
  pageLimit: number;
  /** The engine's chunk size; null keeps the engine's default. */
  chunkSize: number | null;
  rawChunk: number;
  userId: string;
  deviceId: string;
}

export interface Responsiveness {
  /** Longest time between two requestAnimationFrame callbacks. */
  longestFrameGapMs: number;
  frames: number;
  /** Longest main-thread task the long-task observer saw (0: none over 50 ms). */
  longestTaskMs: number;
  longTasks: number;
  /** Sum over long tasks of their time beyond 50 ms. */
  blockingMs: number;
}

export interface RunFigures {
  ms: number;
  screen: Responsiveness;
}

/** `sync-sealed`: the same sync on a protected tablet (every value sealed with AES-GCM). */
export type BenchRun = 'raw-one-call' | 'raw-chunked' | 'sync' | 'sync-sealed';

export type SyncFigures = RunFigures & {
  timings: SyncTimings;
  outcome: string;
  records: number;
  /** Patients the search's directory holds afterwards (kept current page by page). */
  directoryPatients: number;
  /** Time the directory spent applying the committed pages. */
  directoryApplyMs: number;
  /** Records whose stored value (read past Dexie, straight from IndexedDB) is a sealed box. */
  sealedRecords: number;
};

/** Counts the records IndexedDB itself holds sealed, reading under the sealing layer. */
async function countSealed(name: string): Promise<number> {
  const idb = await new Promise<IDBDatabase>((resolve, reject) => {
    const request = indexedDB.open(name);
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => reject(request.error);
  });
  try {
    const values = await new Promise<unknown[]>((resolve, reject) => {
      const request = idb.transaction('records').objectStore('records').getAll();
      request.onsuccess = () => resolve(request.result as unknown[]);
      request.onerror = () => reject(request.error);
    });
    return values.filter(isSealed).length;
  } finally {
    idb.close();
  }
}

const status = (text: string) => {
  const element = document.getElementById('status');
  if (element) element.textContent = text;
};

const nextFrame = () => new Promise<number>((resolve) => requestAnimationFrame(resolve));

/** Starts watching the screen; the returned function stops and reports. */
function watchScreen(): () => Promise<Responsiveness> {
  let running = true;
  let frames = 0;
  let last = performance.now();
  let longestGap = 0;
  const onFrame = (time: number) => {
    if (!running) return;
    longestGap = Math.max(longestGap, time - last);
    last = time;
    frames += 1;
    requestAnimationFrame(onFrame);
  };
  requestAnimationFrame(onFrame);
  const tasks: number[] = [];
  const supported = PerformanceObserver.supportedEntryTypes.includes('longtask');
  const observer = supported
    ? new PerformanceObserver((list) => {
        for (const entry of list.getEntries()) tasks.push(entry.duration);
      })
    : null;
  observer?.observe({ type: 'longtask' });
  return async () => {
    // One more frame, so a stall at the very end is counted too.
    await nextFrame();
    running = false;
    for (const entry of observer?.takeRecords() ?? []) tasks.push(entry.duration);
    observer?.disconnect();
    return {
      longestFrameGapMs: longestGap,
      frames,
      longestTaskMs: tasks.length > 0 ? Math.max(...tasks) : 0,
      longTasks: tasks.length,
      blockingMs: tasks.reduce((sum, duration) => sum + Math.max(0, duration - 50), 0),
    };
  };
}

async function freshDb(name: string, vault?: DataKeyVault): Promise<FuselightDb> {
  await FuselightDb.delete(name);
  const db = vault ? new FuselightDb(name, vault) : new FuselightDb(name);
  await db.open();
  return db;
}

async function drop(db: FuselightDb): Promise<void> {
  db.close();
  await db.delete();
}

async function rawPut(rows: StoredRecord[], chunk: number | null): Promise<RunFigures> {
  const db = await freshDb(chunk === null ? 'bench-raw' : 'bench-raw-chunked');
  await nextFrame();
  const stop = watchScreen();
  const started = performance.now();
  if (chunk === null) await db.records.bulkPut(rows);
  else
    for (let i = 0; i < rows.length; i += chunk) await db.records.bulkPut(rows.slice(i, i + chunk));
  const ms = performance.now() - started;
  const screen = await stop();
  const stored = await db.records.count();
  await drop(db);
  if (stored !== rows.length) throw new Error(`plain bulkPut stored ${stored} of ${rows.length}`);
  return { ms, screen };
}

async function engineSync(options: BenchOptions, sealed = false): Promise<SyncFigures> {
  let vault: DataKeyVault | undefined;
  if (sealed) {
    // A protected tablet, unlocked: its data key is held, so every value is sealed on write.
    vault = new DataKeyVault();
    vault.markProtected();
    vault.hold(await newDataKey());
  }
  const db = await freshDb(sealed ? 'bench-sync-sealed' : 'bench-sync', vault);
  const engine = new SyncEngine({
    db,
    baseUrl: '',
    auth: { tokenFor: async () => 'bench-token', onUnauthorized: async () => undefined },
    deviceId: options.deviceId,
    pullAs: () => options.userId,
    // A wall clock with sub-millisecond steps, so the breakdown of small steps is not all zeros.
    clock: { now: () => performance.timeOrigin + performance.now() },
    network: { isOnline: () => true, subscribe: () => () => undefined },
    pageLimit: options.pageLimit,
    ...(options.chunkSize === null ? {} : { chunkSize: options.chunkSize }),
  });
  await db.patientDirectory.whenReady();
  await nextFrame();
  const stop = watchScreen();
  const started = performance.now();
  const outcome = await engine.syncOnce();
  const ms = performance.now() - started;
  const screen = await stop();
  engine.stop();
  const timings = engine.lastTimings as SyncTimings;
  const records = await db.records.count();
  const directory = db.patientDirectory.stats();
  db.close();
  const sealedRecords = await countSealed(db.name);
  await db.delete();
  return {
    ms,
    screen,
    timings,
    outcome: JSON.stringify(outcome),
    records,
    directoryPatients: directory.patients,
    directoryApplyMs: directory.applyMs,
    sealedRecords,
  };
}

/** One measurement; the script gives each its own fresh browser profile. */
async function runFirstSyncBench(
  run: BenchRun,
  options: BenchOptions,
): Promise<RunFigures | SyncFigures> {
  status(run);
  if (run === 'sync') return engineSync(options);
  if (run === 'sync-sealed') return engineSync(options, true);
  const rows = (await (await fetch('/bench/rows.json')).json()) as StoredRecord[];
  if (rows.length !== options.total) throw new Error(`expected ${options.total} rows`);
  return rawPut(rows, run === 'raw-chunked' ? options.rawChunk : null);
}

(window as unknown as { runFirstSyncBench: typeof runFirstSyncBench }).runFirstSyncBench =
  runFirstSyncBench;
status('ready');
