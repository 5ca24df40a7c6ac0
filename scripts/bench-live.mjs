#!/usr/bin/env node
// npm run bench:live — live changes across two server processes on a throwaway PostgreSQL
// cluster: edit-to-IndexedDB latency (p50/p95/p99) of 20 simulated tablets holding the event
// stream, one pull's round trip as the floor, and the memory and file descriptors of 1,000 idle
// streams on one process (conflict-tests/bench/live.live-bench.ts). Figures are printed, not
// asserted.
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import { ensurePostgres, freePort, repoRoot, run, startCluster, stopCluster } from './lib.mjs';

await ensurePostgres();
const dir = join('/var/tmp', `fuselight-bench-live-${process.pid}`);
const url = startCluster({ dir, port: await freePort(), fast: false });
let failed = false;
try {
  await run('npm', ['run', 'build', '-w', 'sync-server', '--silent'], { cwd: repoRoot });
  await run('npx', ['vitest', 'run', '--config', 'vitest.live-bench.config.mts'], {
    cwd: join(repoRoot, 'conflict-tests'),
    env: { ...process.env, FUSELIGHT_TEST_PG_URL: url, NODE_ENV: 'test' },
  });
} catch (error) {
  failed = true;
  console.error(error instanceof Error ? error.message : String(error));
} finally {
  stopCluster(dir);
  rmSync(dir, { recursive: true, force: true });
}
process.exit(failed ? 1 : 0);
