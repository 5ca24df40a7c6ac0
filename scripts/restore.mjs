#!/usr/bin/env node
// `npm run restore -- FILE`: restores a backup made by `npm run backup` into a fresh PostgreSQL
// cluster that then becomes the product's (the cluster it replaces is kept beside it, renamed),
// after a confirmation. `npm start` must be stopped first. Options:
//   --yes         no question asked (for scripts)
//   --into URL    restore into this existing, empty database instead (an operator's own
//                 PostgreSQL; the tests)
// After pg_restore it applies the server's migrations (a backup of an older release) and records
// the restore in "sync_timeline": tablets whose cursor is above the highest version the backup
// holds are told to pull everything again, so none keeps a silent gap (docs/sync-protocol.md,
// "Restoring the server from a backup"). Changes acknowledged after the backup was taken are not
// in it.
import { spawnSync } from 'node:child_process';
import { existsSync, renameSync, rmSync } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { createInterface } from 'node:readline/promises';
import {
  StepError,
  clusterDir,
  clusterRunning,
  ensureDatabase,
  ensurePostgres,
  freePort,
  pgProgram,
  productDatabase,
  run,
  startCluster,
  step,
  stopCluster,
} from './lib.mjs';

function usage(message) {
  console.error(`✗ ${message}\nUsage: npm run restore -- FILE [--yes] [--into DATABASE_URL]`);
  process.exit(2);
}

const args = process.argv.slice(2);
const yes = args.includes('--yes');
const intoAt = args.indexOf('--into');
const into = intoAt >= 0 ? args[intoAt + 1] : null;
if (intoAt >= 0 && !into) usage('--into: give the URL of an empty database');
const files = args.filter((a, i) => !a.startsWith('--') && (intoAt < 0 || i !== intoAt + 1));
if (files.length !== 1) usage('FILE: give exactly one backup file (made by `npm run backup`)');
const file = resolve(files[0]);
if (!existsSync(file)) usage(`FILE: ${file} does not exist`);

/** What the backup holds, from its table of contents; fails for a file that is not one. */
function describeBackup() {
  const listed = spawnSync(pgProgram('pg_restore'), ['--list', file], { encoding: 'utf8' });
  if (listed.status !== 0) {
    throw new Error(
      `FILE: ${file} is not a backup pg_restore can read (${(listed.stderr || '').trim()})`,
    );
  }
  const created = /Archive created at (.+)/.exec(listed.stdout)?.[1]?.trim() ?? 'an unknown time';
  const database = /dbname: (.+)/.exec(listed.stdout)?.[1]?.trim() ?? 'unknown';
  return { created, database };
}

async function confirm(question) {
  if (yes) return;
  if (!process.stdin.isTTY) {
    throw new Error('no terminal to confirm on: run it in a terminal, or add --yes');
  }
  const rl = createInterface({ input: process.stdin, output: process.stdout });
  const answer = await rl.question(question);
  rl.close();
  if (answer.trim() !== 'RESTORE') throw new Error('not confirmed: nothing was changed');
}

/** pg_restore, migrations, and the restore recorded for the tablets. */
async function restoreInto(url) {
  await step('pg_restore into the fresh database', () =>
    run(
      pgProgram('pg_restore'),
      ['--no-owner', '--exit-on-error', '--single-transaction', `--dbname=${url}`, file],
      { stdio: ['ignore', 'inherit', 'inherit'] },
    ),
  );
  const { default: pg } = await import('pg');
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    const { rows } = await client.query(`select to_regclass('sync_timeline') is not null as "ok"`);
    if (!rows[0]?.ok) {
      // A backup of an earlier release: bring its schema up to this one first.
      await step('apply the server migrations (the backup is of an earlier release)', async () => {
        // Built now, so the migrations are this checkout's, not an older build's.
        await run('npm', ['run', 'build', '-w', 'sync-server', '--silent'], {
          stdio: ['ignore', 'ignore', 'inherit'],
        });
        await run('node', ['sync-server/dist/cli.cjs', 'migrate'], {
          env: { ...process.env, DATABASE_URL: url },
        });
      });
    }
    return await step('record the restore so tablets ahead of it pull again', async () => {
      await client.query('begin');
      const marked = await client.query(
        `update "sync_timeline"
            set "generation" = "generation" + 1,
                "restored_through" = greatest(coalesce((select max("version") from "sync_record"), 0),
                                              (select "horizon_version" from "sync_horizon")),
                "restored_at" = now(), "restored_from" = $1
          returning "generation", "restored_through"::text as "through",
                    (select count(*) from "sync_record")::text as "records"`,
        [basename(file)],
      );
      const row = marked.rows[0];
      if (!row)
        throw new Error('sync_timeline has no row: the backup is not of a Fuselight server');
      // A fresh cluster numbers its transactions from low again: raise the offset so the next
      // versions are above every restored one (sync-server/src/records/record-version.ts).
      await client.query(
        `update "sync_version_offset"
            set "xid_offset" = greatest("xid_offset", $1::bigint / 1000 + 2 - pg_current_xact_id()::text::bigint)`,
        [row.through],
      );
      await client.query('commit');
      return row;
    });
  } finally {
    await client.end();
  }
}

async function main() {
  await step("PostgreSQL from Debian's packages", ensurePostgres);
  const backup = await step(`read ${file}`, async () => describeBackup());
  if (into) {
    await confirm(
      `Restore ${basename(file)} (taken ${backup.created}) into ${into}? Type RESTORE to continue: `,
    );
    const row = await restoreInto(into);
    console.log(
      `\nRestored ${row.records} records into ${into} (restore ${row.generation}; tablets above version ${row.through} will pull everything again).`,
    );
    return;
  }

  const product = productDatabase();
  if (!product.local) {
    throw new Error('DATABASE_URL is set: restore into an empty database with --into URL');
  }
  if (clusterRunning(product.dir)) {
    throw new Error(
      'the product is running (its PostgreSQL cluster is up): stop `npm start` with Ctrl-C first',
    );
  }
  const stamp = new Date().toISOString().replace(/[:.]/g, '-');
  const kept = join(dirname(product.dir), `pg-before-restore-${stamp}`);
  await confirm(
    `This replaces the product's database with the backup ${basename(file)} (taken ${backup.created}).\n` +
      `The current cluster is kept at ${kept}. Changes acknowledged after the backup was taken are not in it;\n` +
      `tablets that synced them will fetch everything again and keep their own unsent edits.\n` +
      'Type RESTORE to continue: ',
  );
  const freshDir = clusterDir(`pg-restore-${stamp}`);
  const adminUrl = await step(`fresh PostgreSQL cluster (${freshDir})`, async () =>
    startCluster({ dir: freshDir, port: await freePort() }),
  );
  let row;
  try {
    const url = await ensureDatabase(adminUrl, 'fuselight');
    row = await restoreInto(url);
  } catch (error) {
    // Nothing changed: the product's cluster is untouched; the half-made one goes.
    stopCluster(freshDir);
    rmSync(freshDir, { recursive: true, force: true });
    throw error;
  }
  stopCluster(freshDir);
  await step('make the fresh cluster the product’s', () => {
    if (existsSync(product.dir)) renameSync(product.dir, kept);
    renameSync(freshDir, product.dir);
  });
  console.log(
    `\nRestored ${row.records} records (restore ${row.generation}; tablets above version ${row.through} will pull everything again).` +
      `\nThe earlier cluster is kept at ${kept}; remove it once you are sure.\nStart the product with: npm start`,
  );
}

main().catch((error) => {
  if (!(error instanceof StepError))
    console.error(`✗ ${error instanceof Error ? error.message : String(error)}`);
  process.exit(1);
});
