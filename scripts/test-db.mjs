#!/usr/bin/env node
// Starts a throwaway PostgreSQL cluster for running one workspace's tests by hand:
//   node scripts/test-db.mjs        prints FUSELIGHT_TEST_PG_URL=...; Ctrl-C stops and removes it
// Tests of a database outage run it as a child: SIGUSR1 stops PostgreSQL (printing "stopped"),
// SIGUSR2 starts it again on the same port (printing "started").
import { rmSync } from 'node:fs';
import { join } from 'node:path';
import { ensurePostgres, freePort, startCluster, stopCluster } from './lib.mjs';

await ensurePostgres();
const dir = join('/var/tmp', `fuselight-testdb-${process.pid}`);
const port = Number(process.env.PORT) || (await freePort());
const url = startCluster({ dir, port, fast: true });
console.log(`export FUSELIGHT_TEST_PG_URL=${url}`);
const stop = () => {
  stopCluster(dir);
  rmSync(dir, { recursive: true, force: true });
  process.exit(0);
};
process.on('SIGUSR1', () => {
  stopCluster(dir);
  console.log('stopped');
});
process.on('SIGUSR2', () => {
  startCluster({ dir, port, fast: true });
  console.log('started');
});
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
setInterval(() => undefined, 1 << 30);
