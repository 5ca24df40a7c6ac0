#!/usr/bin/env node
// `npm test`: installs what is missing, starts the real parts on their own ports (a throwaway
// PostgreSQL cluster, never the demo data), then runs lint, type checks and every workspace's
// tests, and the end-to-end tests in Debian's Chromium. Exits non-zero on any failure.
//   node scripts/test.mjs --only shared,sync-server   run some workspaces (e2e is one: "e2e")
//   node scripts/test.mjs --skip-lint                 skip lint and type checks
//   node scripts/test.mjs --only e2e --files live,tabs-storage
//                                                     run only the test files whose paths match
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import {
  StepError,
  ensureChromium,
  ensureDatabase,
  ensureNodeModules,
  ensurePostgres,
  freePort,
  repoRoot,
  run,
  serverNodeArgs,
  startCluster,
  step,
  stopCluster,
  waitForHttp,
} from './lib.mjs';

const args = process.argv.slice(2);
const onlyArg = args.find((a) => a.startsWith('--only'));
const only = onlyArg
  ? (onlyArg.includes('=') ? onlyArg.split('=')[1] : args[args.indexOf(onlyArg) + 1]).split(',')
  : null;
const skipLint = args.includes('--skip-lint') || only !== null;
const filesAt = args.indexOf('--files');
const fileFilters = filesAt >= 0 ? (args[filesAt + 1] ?? '').split(',').filter(Boolean) : [];
const suites = ['shared', 'pwa', 'sync-server', 'conflict-tests', 'e2e'].filter(
  (s) => !only || only.includes(s),
);

const resultsDir = join(repoRoot, 'artifacts', 'test-results');
const clusterPath = join('/var/tmp', `fuselight-test-${process.pid}-${Date.now()}`);
const children = [];
let clusterStarted = false;

function cleanup() {
  for (const child of children) if (child.exitCode === null) child.kill('SIGTERM');
  if (clusterStarted) {
    stopCluster(clusterPath);
    rmSync(clusterPath, { recursive: true, force: true });
  }
}
process.on('SIGINT', () => {
  cleanup();
  process.exit(130);
});
process.on('SIGTERM', () => {
  cleanup();
  process.exit(143);
});

function tally(file) {
  if (!existsSync(file)) return { passed: 0, failed: 0, skipped: 0 };
  const report = JSON.parse(readFileSync(file, 'utf8'));
  return {
    passed: report.numPassedTests ?? 0,
    failed: (report.numFailedTests ?? 0) + (report.numFailedTestSuites ?? 0),
    skipped: (report.numPendingTests ?? 0) + (report.numTodoTests ?? 0),
  };
}

async function vitest(workspace, env, config) {
  const out = join(resultsDir, `${workspace.replace('/', '-')}${config ? '-e2e' : ''}.json`);
  rmSync(out, { force: true });
  const cfg = config ? ['--config', config] : [];
  await run(
    'npx',
    [
      'vitest',
      'run',
      ...fileFilters,
      ...cfg,
      '--reporter=default',
      '--reporter=json',
      `--outputFile.json=${out}`,
    ],
    {
      cwd: join(repoRoot, workspace),
      env: { ...process.env, ...env },
    },
  ).finally(() => undefined);
  return out;
}

async function main() {
  mkdirSync(resultsDir, { recursive: true });
  await step('install npm dependencies (npm ci when the lock file changed)', ensureNodeModules);
  await step("PostgreSQL from Debian's packages", ensurePostgres);
  if (suites.includes('e2e'))
    await step("Chromium from Debian's packages (end-to-end tests)", ensureChromium);
  if (!skipLint) {
    await step('lint and format check (eslint, prettier)', () =>
      run('npm', ['run', 'lint', '--silent']),
    );
    await step('type check every workspace (tsc --noEmit)', () =>
      run('npm', ['run', 'typecheck', '--silent']),
    );
  }
  const port = await freePort();
  const adminUrl = await step(`throwaway PostgreSQL cluster on 127.0.0.1:${port}`, () => {
    clusterStarted = true;
    return startCluster({ dir: clusterPath, port, fast: true });
  });
  const env = { FUSELIGHT_TEST_PG_URL: adminUrl, CHROMIUM_PATH: '/usr/bin/chromium', TZ: 'UTC' };

  const reports = [];
  const failures = [];
  for (const suite of suites.filter((s) => s !== 'e2e')) {
    try {
      await step(`tests: ${suite}`, async () => reports.push(await vitest(suite, env)));
    } catch {
      failures.push(suite);
      reports.push(join(resultsDir, `${suite}.json`));
    }
  }

  if (suites.includes('e2e')) {
    try {
      await step('build the PWA and the server for end-to-end tests', async () => {
        await run('npm', ['run', 'build', '-w', 'pwa', '--silent']);
        await run('npm', ['run', 'build', '-w', 'sync-server', '--silent']);
      });
      const dbUrl = await ensureDatabase(adminUrl, 'fuselight_e2e');
      const appPort = await freePort();
      const serverEnv = {
        ...process.env,
        ...env,
        NODE_ENV: 'test',
        DATABASE_URL: dbUrl,
        PORT: String(appPort),
        PWA_DIST: join(repoRoot, 'pwa', 'dist'),
        APP_ORIGIN: `http://127.0.0.1:${appPort}`,
      };
      await step('migrate the end-to-end database', () =>
        run('node', ['sync-server/dist/cli.cjs', 'migrate'], { env: serverEnv }),
      );
      const server = spawn('node', [...serverNodeArgs, 'sync-server/dist/main.cjs'], {
        cwd: repoRoot,
        env: serverEnv,
        stdio: ['ignore', 'ignore', 'inherit'],
      });
      children.push(server);
      await step('start the server for end-to-end tests', () =>
        waitForHttp(`http://127.0.0.1:${appPort}/api/health`),
      );
      await step('tests: end-to-end in Chromium', async () =>
        reports.push(
          await vitest(
            'pwa',
            {
              ...env,
              FUSELIGHT_E2E_BASE_URL: `http://127.0.0.1:${appPort}`,
              FUSELIGHT_E2E_DATABASE_URL: dbUrl,
            },
            'vitest.e2e.config.mts',
          ),
        ),
      );
    } catch {
      failures.push('e2e');
      reports.push(join(resultsDir, 'pwa-e2e.json'));
    }
  }

  const total = reports.map(tally).reduce(
    (a, b) => ({
      passed: a.passed + b.passed,
      failed: a.failed + b.failed,
      skipped: a.skipped + b.skipped,
    }),
    { passed: 0, failed: 0, skipped: 0 },
  );
  if (failures.length && total.failed === 0) total.failed = failures.length;
  console.log(
    failures.length ? `\nFailed suites: ${failures.join(', ')}` : '\nEvery suite passed.',
  );
  console.log(
    `${total.passed} passed, ${total.failed} failed${total.skipped ? `, ${total.skipped} skipped` : ''}`,
  );
  return failures.length === 0;
}

main()
  .then((ok) => {
    cleanup();
    process.exit(ok ? 0 : 1);
  })
  .catch((error) => {
    if (!(error instanceof StepError)) console.error(error);
    cleanup();
    process.exit(1);
  });
