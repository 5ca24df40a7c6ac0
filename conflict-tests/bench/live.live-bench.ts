// npm run bench:live — live changes across two server processes (figures printed, not asserted).
// Two production server bundles (sync-server/dist/main.cjs, one process each, each with its own
// listening connection) serve one PostgreSQL database. Twenty simulated tablets (the real PWA sync
// engine on fake-indexeddb, holding GET /api/sync/events) are spread over the two. Each edit is
// pushed by one tablet and timed from the push's answer to the record's new version being in the
// IndexedDB of a tablet on the other process; one pull's own round trip is printed beside it as the
// floor. Then 1,000 idle streams are opened on one process, and its resident memory and open file
// descriptors are read from /proc before, with and after them.
//   BENCH_LIVE_EDITS (default 240), BENCH_LIVE_TABLETS (default 20), BENCH_LIVE_STREAMS (1000).
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { TestDevice, TestUser } from '@server/testing/identity-factory';
import { createDevice, createSite, createUser } from '@server/testing/identity-factory';
import { TestClock, createTestApp, type TestApp } from '@server/testing/test-app';
import type { Clinic } from '../src/harness/clinic-server';
import { SimTablet } from '../src/harness/sim-tablet';

// @microsoft/fetch-event-source reads the page's `window` (timers) and `document` (visibility).
const page = globalThis as unknown as { window?: unknown; document?: unknown };
page.window ??= globalThis;
page.document ??= { hidden: false, addEventListener() {}, removeEventListener() {} };

const EDITS = Number(process.env.BENCH_LIVE_EDITS ?? 240);
const TABLETS = Number(process.env.BENCH_LIVE_TABLETS ?? 20);
const STREAMS = Number(process.env.BENCH_LIVE_STREAMS ?? 1000);
const SERVER = join(import.meta.dirname, '..', '..', 'sync-server');
const BUNDLE = join(SERVER, 'dist', 'main.cjs');
const NODE_ARGS = JSON.parse(
  readFileSync(join(SERVER, 'server-node-args.json'), 'utf8'),
) as string[];

const bundles: ChildProcess[] = [];
const tablets: SimTablet[] = [];
let t: TestApp | null = null;

afterAll(async () => {
  for (const tablet of tablets) await tablet.close().catch(() => undefined);
  for (const bundle of bundles) bundle.kill('SIGTERM');
  await new Promise((resolve) => setTimeout(resolve, 500));
  await t?.close();
});

async function freePort(): Promise<number> {
  const probe = (await import('node:net')).createServer();
  await new Promise<void>((listening) => probe.listen(0, '127.0.0.1', listening));
  const port = (probe.address() as AddressInfo).port;
  await new Promise((closed) => probe.close(closed));
  return port;
}

async function startBundle(databaseUrl: string): Promise<{ url: string; pid: number }> {
  if (!existsSync(BUNDLE)) throw new Error(`${BUNDLE} is missing: npm run build -w sync-server`);
  const port = await freePort();
  const child = spawn(process.execPath, [...NODE_ARGS, BUNDLE], {
    env: {
      ...process.env,
      NODE_ENV: 'test',
      DATABASE_URL: databaseUrl,
      HOST: '127.0.0.1',
      PORT: String(port),
      SERVER_PROCESSES: '1',
      SEED_DEMO: 'false',
    },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  bundles.push(child);
  const url = `http://127.0.0.1:${port}`;
  for (let i = 0; i < 600; i += 1) {
    const up = await fetch(`${url}/api/health`).then(
      (r) => r.ok,
      () => false,
    );
    if (up) return { url, pid: child.pid! };
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
  throw new Error('a server bundle did not start within a minute');
}

function availableCores(): number {
  return readFileSync('/proc/cpuinfo', 'utf8')
    .split('\n')
    .filter((l) => l.startsWith('processor')).length;
}

function percentile(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) return NaN;
  const index = Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1);
  return sorted[Math.max(0, index)]!;
}

const ms = (value: number) => `${value.toFixed(0)} ms`;

async function until<T>(read: () => Promise<T | undefined>, timeoutMs: number, what: string) {
  const deadline = performance.now() + timeoutMs;
  for (;;) {
    const value = await read();
    if (value !== undefined) return value;
    if (performance.now() > deadline) throw new Error(`${what} did not happen in ${timeoutMs} ms`);
    await new Promise((resolve) => setTimeout(resolve, 5));
  }
}

/** Resident memory (MB) and open file descriptors of a process, from /proc. */
function footprint(pid: number): { rssMb: number; fds: number } {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8');
  const rssKb = Number(/VmRSS:\s+(\d+) kB/.exec(status)?.[1] ?? NaN);
  return { rssMb: rssKb / 1024, fds: readdirSync(`/proc/${pid}/fd`).length };
}

/** Opens an idle event stream over its own socket; resolves once the server's first bytes came. */
function idleStream(url: string, token: string): Promise<http.ClientRequest> {
  return new Promise((resolve, reject) => {
    const request = http.get(
      `${url}/api/sync/events`,
      { headers: { Authorization: `Bearer ${token}`, Accept: 'text/event-stream' }, agent: false },
      (response) => {
        if (response.statusCode !== 200) {
          reject(new Error(`a stream was refused (${response.statusCode})`));
          return;
        }
        response.once('data', () => resolve(request));
        response.on('error', () => undefined);
      },
    );
    request.on('error', reject);
  });
}

describe('live changes across two server processes', () => {
  it('measures edit-to-IndexedDB latency and the footprint of idle streams', async () => {
    t = await createTestApp({ clock: new TestClock(new Date()) });
    const app = t;
    const site = await createSite(app);
    const servers = [await startBundle(app.db.url), await startBundle(app.db.url)];
    const clinic: Clinic = {
      t: app,
      baseUrl: servers[0]!.url,
      baseUrls: servers.map((s) => s.url),
      servers: [app],
      siteId: site.id,
      person: (role) => createUser(app, { role, siteIds: [site.id] }),
      device: () => createDevice(app, { siteIds: [site.id] }),
      revoke: async () => undefined,
      nowMs: () => Date.now(),
      close: async () => undefined,
    };
    const people: TestUser[] = [];
    const devices: TestDevice[] = [];
    for (let i = 0; i < TABLETS; i += 1) {
      people.push(await clinic.person('orthoptist'));
      devices.push(await clinic.device());
    }
    for (let i = 0; i < TABLETS; i += 1) {
      tablets.push(
        new SimTablet(`live-${i}`, clinic, devices[i]!, [people[i]!], {
          baseUrl: clinic.baseUrls[i % 2]!,
          live: true,
        }),
      );
    }
    // One patient per tablet, held by everyone before the edits start.
    const ids: string[] = [];
    for (let i = 0; i < TABLETS; i += 1) {
      ids.push(
        await tablets[i]!.create('patient', {
          siteId: site.id,
          givenName: `Given${i}`,
          familyName: `Family${i}`,
          dateOfBirth: '2015-06-15',
          clinicNumber: `LB-${i}`,
        }),
      );
      expect((await tablets[i]!.syncUntilSettled()).kind).toBe('synced');
    }
    for (const tablet of tablets) tablet.engine.start();
    await until(
      async () => (tablets.every((x) => x.engine.snapshot().live === 'live') ? true : undefined),
      60_000,
      'every tablet holding its stream',
    );
    for (const tablet of tablets) expect((await tablet.syncUntilSettled()).kind).toBe('synced');

    const latencies: number[] = [];
    const loadBefore = loadavg()[0]!;
    const cpuBefore = process.cpuUsage();
    const editsStarted = performance.now();
    for (let n = 0; n < EDITS; n += 1) {
      const writer = tablets[n % TABLETS]!;
      // The watcher is on the other server process (odd and even tablets alternate).
      const watcher = tablets[(n + 1) % TABLETS]!;
      const id = ids[n % TABLETS]!;
      await writer.update('patient', id, { notes: `edit ${n}` });
      const acks = writer.acks.length;
      await writer.engine.syncNow();
      const ack = writer.acks.slice(acks).find((a) => a.entry.recordId === id);
      if (!ack || ack.result.status === 'rejected') throw new Error(`edit ${n} was not applied`);
      const version = ack.result.version;
      const arrived = await until(
        async () => {
          const record = await watcher.get('patient', id);
          return record && record.version >= version ? performance.now() : undefined;
        },
        30_000,
        `edit ${n} reaching ${watcher.name}`,
      );
      latencies.push(Math.max(0, arrived - ack.at));
    }

    const editsMs = performance.now() - editsStarted;
    const cpu = process.cpuUsage(cpuBefore);
    const simulatorCpu = (cpu.user + cpu.system) / 1000 / editsMs;
    const loadAfter = loadavg()[0]!;

    // The floor: one pull's own round trip for one new record, as a tablet's pull makes it.
    const token = (await tablets[1]!.auth.tokenFor(people[1]!.id))!;
    const newest = (await tablets[1]!.get('patient', ids[0]!))!.version;
    const pulls: number[] = [];
    for (let i = 0; i < 30; i += 1) {
      const started = performance.now();
      const response = await fetch(`${clinic.baseUrls[1]}/api/sync/pull?after=${newest - 1}`, {
        headers: { Authorization: `Bearer ${token}` },
      });
      await response.json();
      pulls.push(performance.now() - started);
    }
    latencies.sort((a, b) => a - b);
    pulls.sort((a, b) => a - b);

    // Idle streams on one process.
    const tokens: string[] = [];
    for (let i = 0; i < TABLETS; i += 1)
      tokens.push((await tablets[i]!.auth.tokenFor(people[i]!.id))!);
    for (const tablet of tablets) tablet.engine.stop();
    await new Promise((resolve) => setTimeout(resolve, 3_000));
    const pid = servers[0]!.pid;
    const idle = footprint(pid);
    const open: http.ClientRequest[] = [];
    const opening = performance.now();
    for (let i = 0; i < STREAMS; i += 1) {
      open.push(await idleStream(clinic.baseUrls[0]!, tokens[i % tokens.length]!));
    }
    const openedMs = performance.now() - opening;
    await new Promise((resolve) => setTimeout(resolve, 5_000));
    const held = footprint(pid);
    for (const request of open) request.destroy();
    await new Promise((resolve) => setTimeout(resolve, 5_000));
    const after = footprint(pid);

    const lines = [
      '',
      `Live changes: ${TABLETS} tablets over 2 server processes (production bundles), ${EDITS} edits`,
      `  push answer → record in another tablet's IndexedDB (tablet on the other process):`,
      `    p50 ${ms(percentile(latencies, 50))}   p95 ${ms(percentile(latencies, 95))}   p99 ${ms(percentile(latencies, 99))}   max ${ms(latencies.at(-1) ?? NaN)}   (aim: p95 under 1 s)`,
      `  the simulated tablets' own process was busy ${(simulatorCpu * 100).toFixed(0)}% of the time (every tablet pulls every edit); machine load average ${loadBefore.toFixed(1)} → ${loadAfter.toFixed(1)} on ${availableCores()} cores`,
      `  floor, one pull's own round trip (1 record, 30 runs): p50 ${ms(percentile(pulls, 50))}   p95 ${ms(percentile(pulls, 95))}`,
      `  ${STREAMS} idle streams on one process (opened in ${ms(openedMs)}, ${tokens.length} sessions):`,
      `    resident memory: idle ${idle.rssMb.toFixed(1)} MB, with the streams ${held.rssMb.toFixed(1)} MB (+${(held.rssMb - idle.rssMb).toFixed(1)} MB, ${(((held.rssMb - idle.rssMb) * 1024) / STREAMS).toFixed(1)} KB a stream; aim: under 50 MB above idle), after closing them ${after.rssMb.toFixed(1)} MB`,
      `    open file descriptors: idle ${idle.fds}, with the streams ${held.fds} (+${held.fds - idle.fds}), after closing them ${after.fds}`,
      '',
    ];
    console.log(lines.join('\n'));
    expect(latencies).toHaveLength(EDITS);
  }, 1_800_000);
});
