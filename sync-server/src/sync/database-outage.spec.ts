// PostgreSQL stopped in the middle of pushes: the server answers 503 with a message within its
// database wait limit (never hangs), /api/health says the database is down, and both recover by
// themselves once it is back; a push resent after the outage is applied exactly once (replayed
// if it had committed).
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_WAIT_LIMIT_MS } from '../database/orm-options';
import { sqlRows } from '../database/sql';
import { startOwnCluster, type OwnCluster } from '../testing/own-cluster';
import type { TestApp } from '../testing/test-app';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
  type Tablet,
} from './testing/sync-test-kit';

let cluster: OwnCluster;
let t: TestApp;
let tablet: Tablet;

beforeAll(async () => {
  cluster = await startOwnCluster();
  t = await createSyncTestApp({ db: cluster.db });
  tablet = await tabletFor(t, 'orthoptist', [SITE_A]);
}, 120_000);

afterAll(async () => {
  await t?.close();
  await cluster?.close();
});

async function timed<T>(work: Promise<T>): Promise<{ value: T; ms: number }> {
  const started = performance.now();
  const value = await work;
  return { value, ms: performance.now() - started };
}

describe('PostgreSQL stopped mid-push', () => {
  it('answers 503 in words, says so on /api/health, and recovers by itself', async () => {
    await tablet.pushOk([tablet.change({ recordId: newId(), fields: patientFields(SITE_A) })]);

    // A large push in flight when the database stops.
    const big = Array.from({ length: 400 }, () =>
      tablet.change({ recordId: newId(), fields: patientFields(SITE_A) }),
    );
    const inFlight = timed(Promise.resolve(tablet.push(big)));
    await cluster.stop();
    const first = await inFlight;
    expect([200, 503]).toContain(first.value.status);
    expect(first.ms).toBeLessThan(DATABASE_WAIT_LIMIT_MS + 5_000);

    // While it is down: a push, a pull and the health check answer 503 in words, in time.
    const single = tablet.change({ recordId: newId(), fields: patientFields(SITE_A) });
    const push = await timed(Promise.resolve(tablet.push([single])));
    expect(push.value.status).toBe(503);
    expect(push.value.body.message).toMatch(/database is not answering/);
    expect(push.value.headers['retry-after']).toBe('5');
    expect(push.ms).toBeLessThan(DATABASE_WAIT_LIMIT_MS + 5_000);
    const pull = await tablet.pull(0);
    expect(pull.status).toBe(503);
    const health = await request(t.app.getHttpServer()).get('/api/health');
    expect(health.status).toBe(503);
    expect(health.body).toMatchObject({ db: 'error', message: 'The database is not answering.' });

    // Back again: health and sync recover with no restart of the server.
    await cluster.start();
    let healthy = 0;
    for (let i = 0; i < 60 && healthy !== 200; i += 1) {
      healthy = (await request(t.app.getHttpServer()).get('/api/health')).status;
      if (healthy !== 200) await new Promise((r) => setTimeout(r, 500));
    }
    expect(healthy).toBe(200);

    const resentBig = await tablet.pushOk(big);
    const statuses = new Set(resentBig.results.map((r) => r.status));
    expect([...statuses]).toEqual(['applied']);
    // Replayed exactly when the push in flight had committed before the database stopped.
    const replayed = resentBig.results.filter((r) => r.replayed === true).length;
    // (A 503 can also come from a commit that reached the disk as the connection was cut.)
    expect([0, big.length]).toContain(replayed);
    if (first.value.status === 200) expect(replayed).toBe(big.length);
    const resentSingle = await tablet.pushOk([single]);
    expect(resentSingle.results[0]).toMatchObject({ status: 'applied' });
    expect(resentSingle.results[0]?.replayed).toBeUndefined();

    // Each change applied once: one answer logged per change id, one record per new patient.
    const ids = [...big, single].map((c) => c.changeId as string);
    const [logged] = await sqlRows<{ n: string }>(
      t.em(),
      `select count(*)::text as "n" from "sync_change" where "change_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
      [JSON.stringify(ids)],
    );
    expect(Number(logged?.n)).toBe(ids.length);
  }, 180_000);
});
