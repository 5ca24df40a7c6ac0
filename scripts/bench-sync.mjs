#!/usr/bin/env node
// npm run bench:sync — push throughput of the sync server (its production bundle) against a
// throwaway PostgreSQL cluster: batches of 500 changes from one and four tablets, beside a plain
// batched INSERT … ON CONFLICT of the same rows, with a breakdown of where the push time goes.
// Then the tablet's first sync into Dexie. Figures are printed, not asserted. BENCH_BATCHES sets the batches per tablet (default 8).
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import { ensurePostgres, freePort, repoRoot, run, startCluster, stopCluster } from './lib.mjs';

await ensurePostgres();
const dir = join('/var/tmp', `fuselight-bench-sync-${process.pid}`);
const url = startCluster({ dir, port: await freePort(), fast: false });
let failed = false;
try {
  // The push throughput is measured against the production bundle, as `npm start` runs it.
  await run('npm', ['run', 'build', '-w', 'sync-server', '--silent'], { cwd: repoRoot });
  await run('npx', ['vitest', 'run', '--config', 'src/sync/bench/vitest.bench.config.mts'], {
    cwd: join(repoRoot, 'sync-server'),
    env: { ...process.env, FUSELIGHT_TEST_PG_URL: url, NODE_ENV: 'test' },
  });
  // The tablet side: a first sync of 50,000 records into Dexie on fake-indexeddb beside a
  // plain bulkPut of the same records (FUSELIGHT_BENCH_RECORDS changes the size).
  await run('npx', ['vitest', 'run', '--config', 'vitest.bench.config.mts'], {
    cwd: join(repoRoot, 'conflict-tests'),
    env: { ...process.env, FUSELIGHT_TEST_PG_URL: url, NODE_ENV: 'test' },
  });
  // The same first sync in Debian's Chromium on a real IndexedDB.
  await run('node', [join(repoRoot, 'scripts', 'bench-first-sync-browser.mjs')], { cwd: repoRoot });
} catch (error) {
  failed = true;
  console.error(error instanceof Error ? error.message : String(error));
} finally {
  stopCluster(dir);
  rmSync(dir, { recursive: true, force: true });
}
process.exit(failed ? 1 : 0);
