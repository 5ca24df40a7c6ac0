#!/usr/bin/env node
// `npm start`: sets up and runs the whole product on this machine — npm packages, Debian's
// PostgreSQL (a private cluster on 127.0.0.1 that keeps its data between starts), migrations and
// the invented demo clinic, the local SMTP, S3 and FHIR fakes, the built PWA and the NestJS server.
// Ctrl-C stops everything it started, PostgreSQL included.
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import {
  StepError,
  clusterDir,
  ensureDatabase,
  ensureNodeModules,
  ensurePostgres,
  repoRoot,
  run,
  serverNodeArgs,
  startCluster,
  step,
  stopCluster,
  waitForHttp,
} from './lib.mjs';

const port = Number(process.env.PORT ?? 3000);
const pgPort = Number(process.env.FUSELIGHT_PG_PORT ?? 54329);
const inboxPort = Number(process.env.MAILDEV_WEB_PORT ?? 1080);
const fhirFakePort = Number(process.env.FHIR_FAKE_PORT ?? 8088);
const pgDir = clusterDir('pg');
const children = [];
let clusterUp = false;
let stopping = false;

function shutdown(code) {
  if (stopping) return;
  stopping = true;
  console.log('\nStopping Fuselight…');
  for (const child of children) if (child.exitCode === null) child.kill('SIGTERM');
  setTimeout(() => {
    if (clusterUp) stopCluster(pgDir);
    console.log('Stopped. Your data stays in the local cluster for the next `npm start`.');
    process.exit(code);
  }, 500);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));

function spawnChild(name, args, env) {
  const child = spawn('node', args, { cwd: repoRoot, env, stdio: ['ignore', 'pipe', 'pipe'] });
  // Nest's start-up chatter (every module and route) is left out; warnings and errors stay.
  const noise = /RouterExplorer|RoutesResolver|InstanceLoader|NestFactory|NestApplication/;
  const prefix = (data) =>
    data
      .toString()
      .split('\n')
      .filter((l) => l && !noise.test(l))
      .map((l) => `[${name}] ${l}`)
      .join('\n');
  child.stdout.on('data', (d) => {
    const text = prefix(d);
    if (text) console.log(text);
  });
  child.stderr.on('data', (d) => {
    const text = prefix(d);
    if (text) console.error(text);
  });
  child.on('exit', (code) => {
    if (!stopping) {
      console.error(`✗ ${name} stopped unexpectedly (exit ${code}); stopping everything.`);
      shutdown(1);
    }
  });
  children.push(child);
  return child;
}

async function main() {
  await step('install npm dependencies (npm ci when the lock file changed)', ensureNodeModules);
  await step("PostgreSQL from Debian's packages", ensurePostgres);
  const adminUrl = await step(
    `private PostgreSQL cluster on 127.0.0.1:${pgPort} (${pgDir})`,
    () => {
      clusterUp = true;
      return startCluster({ dir: pgDir, port: pgPort });
    },
  );
  const databaseUrl = await step('database "fuselight"', () =>
    ensureDatabase(adminUrl, 'fuselight'),
  );
  const env = {
    ...process.env,
    NODE_ENV: process.env.NODE_ENV ?? 'development',
    DATABASE_URL: databaseUrl,
    PORT: String(port),
    PWA_DIST: join(repoRoot, 'pwa', 'dist'),
    SEED_DEMO: 'true',
    S3_DIR: join(pgDir, '..', 's3'),
    // Signed visits are handed to the local fake hospital record unless a real one is named.
    FHIR_BASE_URL: process.env.FHIR_BASE_URL ?? `http://127.0.0.1:${fhirFakePort}/fhir`,
  };
  await step('build the PWA and the server', async () => {
    await run('npm', ['run', 'build', '-w', 'pwa', '--silent'], {
      stdio: ['ignore', 'ignore', 'inherit'],
    });
    await run('npm', ['run', 'build', '-w', 'sync-server', '--silent'], {
      stdio: ['ignore', 'ignore', 'inherit'],
    });
  });
  await step('apply database migrations', () =>
    run('node', ['sync-server/dist/cli.cjs', 'migrate'], { env }),
  );
  const seedLines = await step('load the invented demo clinic', async () => {
    const { capture } = await import('./lib.mjs');
    return capture('node', ['sync-server/dist/cli.cjs', 'seed'], { env })
      .split('\n')
      .filter(Boolean);
  });
  const fakes = spawnChild('fakes', ['scripts/fakes.mjs'], env);
  await step(
    'start the local SMTP, S3 and FHIR fakes',
    () =>
      new Promise((resolve, reject) => {
        fakes.stdout.on('data', (d) => d.toString().includes('fakes ready') && resolve());
        fakes.on('exit', () =>
          reject(
            new Error(
              `the fakes process exited (is port 1025, 1080, 4569 or ${fhirFakePort} in use?)`,
            ),
          ),
        );
      }),
  );
  const processes = process.env.SERVER_PROCESSES ?? '2';
  spawnChild('server', [...serverNodeArgs, 'sync-server/dist/main.cjs'], env);
  await step(`start the server (${processes} processes) on http://127.0.0.1:${port}`, () =>
    waitForHttp(`http://127.0.0.1:${port}/api/health`),
  );

  console.log(`
Fuselight is running.
  App (open in a browser)   http://127.0.0.1:${port}
  API health                http://127.0.0.1:${port}/api/health
  API documentation         http://127.0.0.1:${port}/api/docs
  Sent e-mail (inbox page)  http://127.0.0.1:${inboxPort}
  Hospital record (FHIR)    http://127.0.0.1:${fhirFakePort}  (what the hand-off sent)
${seedLines.map((l) => `  ${l}`).join('\n')}
Press Ctrl-C to stop everything.`);
}

main().catch((error) => {
  if (!(error instanceof StepError))
    console.error(`✗ ${error instanceof Error ? error.message : String(error)}`);
  shutdown(1);
});
