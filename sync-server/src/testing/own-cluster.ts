// A PostgreSQL cluster of one test file's own, which the test may stop and start again (a
// database outage), run through scripts/test-db.mjs as a child process: SIGUSR1 stops it,
// SIGUSR2 starts it again on the same port.
import { spawn, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { MikroORM } from '@mikro-orm/postgresql';
import pg from 'pg';
import { ormOptions } from '../database/orm-options';
import type { TestDatabase } from './test-app';

const repoRoot = fileURLToPath(new URL('../../../', import.meta.url));

export interface OwnCluster {
  /** A migrated database on the cluster. */
  db: TestDatabase;
  stop(): Promise<void>;
  start(): Promise<void>;
  close(): Promise<void>;
}

export async function startOwnCluster(): Promise<OwnCluster> {
  const child: ChildProcess = spawn('node', ['scripts/test-db.mjs'], {
    cwd: repoRoot,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  const waiters: Array<{ line: RegExp; resolve: (m: RegExpMatchArray) => void }> = [];
  child.stdout?.on('data', (d: Buffer) => {
    out += d.toString();
    for (const w of [...waiters]) {
      const m = out.match(w.line);
      if (m) {
        waiters.splice(waiters.indexOf(w), 1);
        out = out.slice((m.index ?? 0) + m[0].length);
        w.resolve(m);
      }
    }
  });
  const waitFor = (line: RegExp, what: string) =>
    new Promise<RegExpMatchArray>((resolve, reject) => {
      const timer = setTimeout(
        () => reject(new Error(`test cluster: no "${what}" in 60 s`)),
        60_000,
      );
      waiters.push({
        line,
        resolve: (m) => {
          clearTimeout(timer);
          resolve(m);
        },
      });
      child.stdout?.emit('data', Buffer.from(''));
    });
  const admin = (await waitFor(/FUSELIGHT_TEST_PG_URL=(\S+)\n/, 'URL'))[1] as string;
  const client = new pg.Client({ connectionString: admin });
  await client.connect();
  await client.query('create database "outage"');
  await client.end();
  const url = new URL(admin);
  url.pathname = '/outage';
  const orm = await MikroORM.init(ormOptions(url.toString(), { entities: [] }));
  await orm.getMigrator().up();
  await orm.close(true);
  return {
    db: { url: url.toString(), name: 'outage', drop: async () => undefined },
    async stop() {
      const done = waitFor(/stopped\n/, 'stopped');
      child.kill('SIGUSR1');
      await done;
    },
    async start() {
      const done = waitFor(/started\n/, 'started');
      child.kill('SIGUSR2');
      await done;
    },
    async close() {
      const exited = new Promise((resolve) => child.once('exit', resolve));
      child.kill('SIGTERM');
      await exited;
    },
  };
}
