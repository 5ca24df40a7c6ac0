// The server process killed (SIGKILL) in the middle of pushes from several tablets, then started
// again: every change it acknowledged is in the pulls; every change it did not acknowledge is
// applied exactly once when the tablet sends it again (`replayed` for those that had committed
// before the kill); and all tablets converge. The server runs as a separate process from its
// production bundle (built into a temporary folder), as `npm start` runs it.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { join, resolve } from 'node:path';
import type { PushResult } from '@fuselight/shared';
import type { TestUser } from '@server/testing/identity-factory';
import { createTestApp, createTestDatabase, type TestApp } from '@server/testing/test-app';
import {
  createDevice,
  createSite,
  createUser,
  revokeDevice,
} from '@server/testing/identity-factory';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Clinic } from '../harness/clinic-server';
import { expectConverged } from '../harness/convergence';
import { SimTablet } from '../harness/sim-tablet';

const repoRoot = resolve(__dirname, '../../..');
const serverDir = join(repoRoot, 'sync-server');
const bundleDir = join(serverDir, `.fault-build-${process.pid}`);
let t: TestApp;
let clinic: Clinic;
let server: ChildProcess | null = null;
let port = 0;
const tablets: SimTablet[] = [];

function freePort(): Promise<number> {
  return new Promise((resolvePort, reject) => {
    const s = createServer();
    s.on('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const address = s.address();
      s.close(() => resolvePort(typeof address === 'object' && address ? address.port : 0));
    });
  });
}

async function startServer(): Promise<void> {
  server = spawn('node', [join(bundleDir, 'main.cjs')], {
    cwd: repoRoot,
    env: {
      ...process.env,
      NODE_ENV: 'test',
      DATABASE_URL: t.db.url,
      PORT: String(port),
      HOST: '127.0.0.1',
    },
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  for (let i = 0; i < 120; i += 1) {
    try {
      const res = await fetch(`http://127.0.0.1:${port}/api/health`);
      if (res.ok) return;
    } catch {
      // not up yet
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error('the server process did not answer /api/health in 30 s');
}

beforeAll(async () => {
  const built = spawnSync('npx', ['vite', 'build', '--outDir', bundleDir, '--emptyOutDir'], {
    cwd: serverDir,
    encoding: 'utf8',
  });
  if (built.status !== 0) throw new Error(`server build failed: ${built.stderr}`);
  const db = await createTestDatabase();
  t = await createTestApp({ db });
  const site = await createSite(t);
  port = await freePort();
  clinic = {
    t,
    baseUrl: `http://127.0.0.1:${port}`,
    siteId: site.id,
    person: (role, options = {}) => createUser(t, { role, siteIds: options.siteIds ?? [site.id] }),
    device: (options = {}) => createDevice(t, { siteIds: options.siteIds ?? [site.id] }),
    revoke: (deviceId) => revokeDevice(t, deviceId),
    nowMs: () => Date.now(),
    close: () => t.close(),
  };
  await startServer();
}, 180_000);

afterAll(async () => {
  server?.kill('SIGKILL');
  for (const tablet of tablets) await tablet.close();
  await t?.close();
  rmSync(bundleDir, { recursive: true, force: true });
});

async function loggedChangeIds(): Promise<Set<string>> {
  const client = new pg.Client({ connectionString: t.db.url });
  await client.connect();
  try {
    const { rows } = await client.query<{ id: string }>(
      `select "change_id"::text as "id" from "sync_change"`,
    );
    return new Set(rows.map((r) => r.id));
  } finally {
    await client.end();
  }
}

describe('the server process killed mid-push', () => {
  it('loses no acknowledged change, applies each unacknowledged one once when resent, and converges', async () => {
    const nurse: TestUser = await clinic.person('orthoptist');
    for (const name of ['red', 'green', 'blue', 'amber']) {
      tablets.push(await SimTablet.create(clinic, name, [nurse]));
    }
    let n = 0;
    const patient = () => ({
      siteId: clinic.siteId,
      givenName: `Child ${(n += 1)}`,
      familyName: 'Mensah',
      dateOfBirth: '2014-11-30',
      clinicNumber: `KL-${n}`,
    });
    // Each tablet keeps charting and syncing; batches of edits so pushes are in flight often.
    let killed = false;
    let syncing = 0;
    const work = tablets.map(async (tablet) => {
      for (let round = 0; !killed && round < 200; round += 1) {
        for (let i = 0; i < 25; i += 1) await tablet.create('patient', patient());
        syncing += 1;
        await tablet.sync().catch(() => undefined);
        syncing -= 1;
      }
    });
    // Kill once some pushes were answered, while at least two tablets are syncing.
    for (let i = 0; i < 2000; i += 1) {
      const answered = tablets.reduce((sum, tablet) => sum + tablet.acks.length, 0);
      if (answered >= 60 && syncing >= 2) break;
      await new Promise((r) => setTimeout(r, 5));
    }
    server?.kill('SIGKILL');
    killed = true;
    await Promise.all(work);
    // Charting goes on while the server is away.
    for (const tablet of tablets) {
      for (let i = 0; i < 5; i += 1) await tablet.create('patient', patient());
      await tablet.sync().catch(() => undefined);
    }

    const ackedBeforeKill = new Map<string, PushResult>();
    for (const tablet of tablets) {
      for (const { result } of tablet.acks) ackedBeforeKill.set(result.changeId, result);
    }
    const committedAtKill = await loggedChangeIds();
    // Every acknowledged change committed.
    for (const id of ackedBeforeKill.keys()) expect(committedAtKill.has(id), id).toBe(true);
    const waiting = new Map<string, string>();
    for (const tablet of tablets) {
      for (const entry of await tablet.entries()) {
        if (entry.state === 'pending') waiting.set(entry.changeId, tablet.name);
      }
    }
    expect(waiting.size).toBeGreaterThan(0);

    await startServer();
    const acksBefore = new Map(tablets.map((tablet) => [tablet.name, tablet.acks.length]));
    await expectConverged(clinic, tablets);

    // Each change waiting at the kill was answered once more: replayed exactly when it had
    // committed before the kill; and every change was logged once.
    const resent = new Map<string, PushResult>();
    for (const tablet of tablets) {
      for (const { result } of tablet.acks.slice(acksBefore.get(tablet.name))) {
        if (waiting.has(result.changeId)) {
          expect(resent.has(result.changeId), `${result.changeId} answered twice`).toBe(false);
          resent.set(result.changeId, result);
        }
      }
    }
    expect([...waiting.keys()].filter((id) => !resent.has(id))).toEqual([]);
    for (const [id, result] of resent) {
      expect(result.replayed === true, id).toBe(committedAtKill.has(id));
    }
    const logged = await loggedChangeIds();
    for (const id of waiting.keys()) expect(logged.has(id), id).toBe(true);
  }, 240_000);
});
