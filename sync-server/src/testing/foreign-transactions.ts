// Other people's transactions on the same PostgreSQL cluster, as an operator's day brings them:
// an analyst's session left open in a transaction (in this database or another one of the
// cluster), and `pg_dump` backups. Sync must not wait for any of them (records/record-version.ts).
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import pg from 'pg';

export type IsolationLevel = 'read committed' | 'repeatable read' | 'serializable';

/** A transaction that holds a transaction id and a snapshot until `end()`. */
export interface ForeignTransaction {
  end(): Promise<void>;
}

export async function openForeignTransaction(
  url: string,
  isolation: IsolationLevel,
): Promise<ForeignTransaction> {
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  await client.query(`begin isolation level ${isolation}`);
  // Takes a transaction id (as a write would) and a snapshot.
  await client.query('select pg_current_xact_id(), count(*) from pg_class');
  return {
    async end() {
      await client.query('rollback').catch(() => undefined);
      await client.end();
    },
  };
}

/** A PostgreSQL client program of the newest installed major version (pg_dump, pg_restore). */
export function pgProgram(name: string): string {
  const base = '/usr/lib/postgresql';
  const majors = existsSync(base)
    ? readdirSync(base)
        .filter((v) => existsSync(join(base, v, 'bin', name)))
        .sort((a, b) => Number(b) - Number(a))
    : [];
  if (majors[0]) return join(base, majors[0], 'bin', name);
  return name;
}

/** `pg_dump` of the database over and over until `stop()`; resolves to the number of dumps. */
export function dumpContinuously(url: string): { stop(): Promise<number> } {
  let stopped = false;
  let child: ChildProcess | null = null;
  let dumps = 0;
  let failure: unknown = null;
  const loop = (async () => {
    while (!stopped) {
      await new Promise<void>((resolve, reject) => {
        child = spawn(
          pgProgram('pg_dump'),
          ['--format=custom', '--no-sync', '--file=/dev/null', url],
          {
            stdio: ['ignore', 'ignore', 'pipe'],
          },
        );
        let errors = '';
        child.stderr?.on('data', (d: Buffer) => (errors += d.toString()));
        child.on('error', reject);
        child.on('exit', (code, signal) => {
          if (code === 0) dumps += 1;
          else if (!stopped || signal === null) {
            reject(new Error(`pg_dump ended with ${code ?? signal}: ${errors}`));
            return;
          }
          resolve();
        });
      });
    }
  })().catch((error: unknown) => {
    failure = error;
  });
  return {
    async stop() {
      stopped = true;
      await loop;
      if (failure) throw failure;
      return dumps;
    },
  };
}

/** The URL of another database of the same cluster. */
export function otherDatabase(url: string, name: string): string {
  const other = new URL(url);
  other.pathname = `/${name}`;
  return other.toString();
}
