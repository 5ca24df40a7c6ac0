#!/usr/bin/env node
// Starts a throwaway PostgreSQL cluster for running one workspace's tests by hand:
//   node scripts/test-db.mjs        prints FUSELIGHT_TEST_PG_URL=...; Ctrl-C stops and removes it
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
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
setInterval(() => undefined, 1 << 30);
