// Shared helpers for `npm start` and `npm test`: readable steps, dependency installation,
// Debian packages, and a private PostgreSQL cluster on 127.0.0.1.
import { spawn, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import {
  existsSync,
  mkdirSync,
  readFileSync,
  readdirSync,
  writeFileSync,
  chmodSync,
} from 'node:fs';
import { createServer } from 'node:net';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

export const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..');

/**
 * Node flags the server process runs with, from sync-server/server-node-args.json (the push
 * benchmark reads the same file): 32 MB semi-spaces for the young generation, so the few
 * megabytes of short-lived objects a push makes (its parsed body, plans and JSON parameters) are
 * collected in fewer scavenges. Measured with `npm run bench:sync` on this 2-core machine: about a
 * quarter less garbage-collection time and 9% less server CPU per push of 500 changes.
 */
export const serverNodeArgs = JSON.parse(
  readFileSync(join(repoRoot, 'sync-server', 'server-node-args.json'), 'utf8'),
);
export const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;

export class StepError extends Error {}

/** Runs one named step; a failure prints one readable line and exits non-zero. */
export async function step(name, fn) {
  const started = Date.now();
  process.stdout.write(`▸ ${name}\n`);
  try {
    const result = await fn();
    const seconds = ((Date.now() - started) / 1000).toFixed(1);
    process.stdout.write(`  ✓ ${name} (${seconds} s)\n`);
    return result;
  } catch (error) {
    const reason = error instanceof Error ? error.message : String(error);
    process.stderr.write(
      `✗ Step "${name}" failed: ${reason.split('\n').filter(Boolean).slice(-3).join(' | ')}\n`,
    );
    throw new StepError(reason);
  }
}

/** Runs a command, inheriting the terminal; rejects with its exit code. */
export function run(command, args, options = {}) {
  return new Promise((resolvePromise, reject) => {
    const child = spawn(command, args, { stdio: 'inherit', cwd: repoRoot, ...options });
    child.on('error', reject);
    child.on('exit', (code, signal) => {
      if (code === 0) resolvePromise();
      else reject(new Error(`${command} ${args.join(' ')} exited with ${code ?? signal}`));
    });
  });
}

/** Runs a command and returns its output; throws with its stderr on failure. */
export function capture(command, args, options = {}) {
  const result = spawnSync(command, args, { cwd: repoRoot, encoding: 'utf8', ...options });
  if (result.error) throw result.error;
  if (result.status !== 0) {
    throw new Error(
      `${command} ${args.join(' ')}: ${(result.stderr || result.stdout || '').trim()}`,
    );
  }
  return result.stdout;
}

function lockHash() {
  return createHash('sha256')
    .update(readFileSync(join(repoRoot, 'package-lock.json')))
    .digest('hex');
}

/** `npm ci` when node_modules is missing or was installed from another lock file. */
export async function ensureNodeModules() {
  const marker = join(repoRoot, 'node_modules', '.fuselight-lock-sha256');
  const want = lockHash();
  if (existsSync(marker) && readFileSync(marker, 'utf8').trim() === want) return 'up to date';
  await run('npm', ['ci', '--no-audit', '--no-fund']);
  writeFileSync(marker, want);
  return 'installed';
}

/** Installs a Debian package when `present()` says it is missing. */
export async function ensureDebianPackage(pkg, present) {
  if (present()) return 'present';
  if (!isRoot) {
    throw new Error(
      `Debian package "${pkg}" is missing: run  sudo apt-get update && sudo apt-get install -y ${pkg}`,
    );
  }
  await run('apt-get', ['update', '-qq']);
  await run('apt-get', ['install', '-y', '-qq', pkg], {
    env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' },
  });
  if (!present()) throw new Error(`apt-get installed ${pkg} but it is still not usable`);
  return 'installed';
}

export function findPostgresBin() {
  const base = '/usr/lib/postgresql';
  if (!existsSync(base)) return null;
  const majors = readdirSync(base)
    .filter((v) => existsSync(join(base, v, 'bin', 'postgres')))
    .sort((a, b) => Number(b) - Number(a));
  return majors.length ? join(base, majors[0], 'bin') : null;
}

export const ensurePostgres = () =>
  ensureDebianPackage('postgresql', () => findPostgresBin() !== null);
export const ensureChromium = () =>
  ensureDebianPackage('chromium', () => existsSync('/usr/bin/chromium'));

/** Runs a PostgreSQL binary as the unprivileged `postgres` user when we are root. */
function pgCommand(bin, args) {
  const pgBin = findPostgresBin();
  if (!pgBin) throw new Error('PostgreSQL server binaries are missing');
  const exe = join(pgBin, bin);
  return isRoot ? ['runuser', ['-u', 'postgres', '--', exe, ...args]] : [exe, args];
}

function pgRun(bin, args) {
  const [cmd, cmdArgs] = pgCommand(bin, args);
  return capture(cmd, cmdArgs);
}

/** Can the postgres user reach (execute) this folder and its parents? */
function postgresCanReach(dir) {
  if (!isRoot) return true;
  const r = spawnSync('runuser', ['-u', 'postgres', '--', 'test', '-x', dir]);
  return r.status === 0;
}

/**
 * Where the cluster lives: in the project's git-ignored .fuselight/ folder when the postgres
 * user can reach it, otherwise under /var/tmp in a folder named after this checkout.
 */
export function clusterDir(name) {
  const inProject = join(repoRoot, '.fuselight');
  mkdirSync(inProject, { recursive: true });
  if (postgresCanReach(inProject)) return join(inProject, name);
  const tag = createHash('sha256').update(repoRoot).digest('hex').slice(0, 12);
  return join('/var/tmp', `fuselight-${tag}`, name);
}

export async function freePort() {
  return new Promise((resolvePromise, reject) => {
    const server = createServer();
    server.unref();
    server.on('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address();
      server.close(() => resolvePromise(port));
    });
  });
}

/** Creates (first time) and starts a private cluster; returns its admin URL. */
export function startCluster({ dir, port, fast = false }) {
  mkdirSync(dir, { recursive: true });
  if (isRoot) capture('chown', ['-R', 'postgres:postgres', dir]);
  chmodSync(dir, 0o700);
  const data = join(dir, 'data');
  if (!existsSync(join(data, 'PG_VERSION'))) {
    pgRun('initdb', ['-D', data, '-U', 'postgres', '-A', 'trust', '-E', 'UTF8', '--no-locale']);
  }
  const options = [
    `-p ${port}`,
    `-k ${dir}`,
    `-c listen_addresses=127.0.0.1`,
    '-c max_connections=200',
  ];
  if (fast) options.push('-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off');
  const status = spawnSync(...pgCommand('pg_ctl', ['-D', data, 'status']));
  if (status.status === 0) {
    // Already running (an earlier start that was not stopped): restart on the wanted port.
    pgRun('pg_ctl', ['-D', data, '-m', 'fast', '-w', 'stop']);
  }
  pgRun('pg_ctl', [
    '-D',
    data,
    '-l',
    join(dir, 'server.log'),
    '-w',
    '-t',
    '30',
    '-o',
    options.join(' '),
    'start',
  ]);
  return `postgres://postgres@127.0.0.1:${port}/postgres`;
}

export function stopCluster(dir) {
  const data = join(dir, 'data');
  if (!existsSync(join(data, 'PG_VERSION'))) return;
  try {
    pgRun('pg_ctl', ['-D', data, '-m', 'fast', '-w', 'stop']);
  } catch {
    // Not running: nothing to stop.
  }
}

export async function ensureDatabase(adminUrl, name) {
  const { default: pg } = await import('pg');
  const client = new pg.Client({ connectionString: adminUrl });
  await client.connect();
  try {
    const found = await client.query('select 1 from pg_database where datname = $1', [name]);
    if (found.rowCount === 0) await client.query(`create database "${name}"`);
  } finally {
    await client.end();
  }
  const url = new URL(adminUrl);
  url.pathname = `/${name}`;
  return url.toString();
}

export async function waitForHttp(url, timeoutMs = 30_000) {
  const deadline = Date.now() + timeoutMs;
  let lastError = 'no answer';
  while (Date.now() < deadline) {
    try {
      const res = await fetch(url);
      if (res.ok) return await res.json().catch(() => ({}));
      lastError = `HTTP ${res.status}`;
    } catch (error) {
      lastError = error instanceof Error ? error.message : String(error);
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`${url} did not answer in time (${lastError})`);
}

/** A PostgreSQL client program (pg_dump, pg_restore) of the newest installed major version. */
export function pgProgram(name) {
  const bin = findPostgresBin();
  if (bin && existsSync(join(bin, name))) return join(bin, name);
  return name;
}

/** Is the private cluster in `dir` running? */
export function clusterRunning(dir) {
  const data = join(dir, 'data');
  if (!existsSync(join(data, 'PG_VERSION'))) return false;
  return spawnSync(...pgCommand('pg_ctl', ['-D', data, 'status'])).status === 0;
}

/** The database `npm start` runs on: DATABASE_URL, or the private cluster's "fuselight". */
export function productDatabase() {
  if (process.env.DATABASE_URL) return { url: process.env.DATABASE_URL, local: false };
  const port = Number(process.env.FUSELIGHT_PG_PORT ?? 54329);
  return {
    url: `postgres://postgres@127.0.0.1:${port}/fuselight`,
    adminUrl: `postgres://postgres@127.0.0.1:${port}/postgres`,
    port,
    dir: clusterDir('pg'),
    local: true,
  };
}
