#!/usr/bin/env node
// `npm run backup`: a consistent backup of the running product's database, as pg_dump makes it
// (custom format, one snapshot: every change acknowledged before it started is in it), into the
// git-ignored folder backups/ (FUSELIGHT_BACKUP_DIR changes it). Prints the file's path.
// The database is DATABASE_URL when set, otherwise the private cluster `npm start` runs; when that
// cluster is stopped it is started for the backup and stopped again. Sync keeps running during a
// backup: pulls do not wait for the backup's transaction (docs/sync-protocol.md).
// Restore with `npm run restore -- FILE` (scripts/restore.mjs).
import { mkdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import {
  StepError,
  clusterRunning,
  ensurePostgres,
  pgProgram,
  productDatabase,
  repoRoot,
  run,
  startCluster,
  step,
  stopCluster,
} from './lib.mjs';

async function main() {
  await step("PostgreSQL from Debian's packages", ensurePostgres);
  const db = productDatabase();
  let startedHere = false;
  if (db.local && !clusterRunning(db.dir)) {
    await step(`start the product's PostgreSQL cluster for the backup (${db.dir})`, () => {
      startCluster({ dir: db.dir, port: db.port });
      startedHere = true;
    });
  }
  try {
    const folder = process.env.FUSELIGHT_BACKUP_DIR ?? join(repoRoot, 'backups');
    mkdirSync(folder, { recursive: true });
    const stamp = new Date().toISOString().replace(/[:.]/g, '-');
    const file = join(folder, `fuselight-${stamp}.dump`);
    await step(`pg_dump (custom format) of ${new URL(db.url).pathname.slice(1)}`, () =>
      run(pgProgram('pg_dump'), ['--format=custom', `--file=${file}`, db.url], {
        stdio: ['ignore', 'inherit', 'inherit'],
      }),
    );
    const size = statSync(file).size;
    console.log(`\nBackup written: ${file} (${(size / 1024 / 1024).toFixed(2)} MB)`);
    console.log('Restore it with: npm run restore -- ' + file);
    console.log(
      'Photos and files live in the object store (S3), not in the database: back up its bucket too (for `npm start`, the folder .fuselight/s3).',
    );
  } finally {
    if (startedHere) stopCluster(db.dir);
  }
}

main().catch((error) => {
  if (!(error instanceof StepError))
    console.error(`✗ ${error instanceof Error ? error.message : String(error)}`);
  process.exit(1);
});
