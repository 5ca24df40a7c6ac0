// The engine's schedule and its promises about the Outbox when the network is down. Everything
// that needs an answer from the server is tested against the real one in conflict-tests/.
import { afterEach, describe, expect, it, vi } from 'vitest';
import { FuselightDb } from '../data/db';
import { RecordsRepository } from '../data/records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields } from '../data/test-fixtures';
import { backoffDelay } from './backoff';
import { SyncEngine, type SyncEngineOptions } from './sync-engine';

const dbs: FuselightDb[] = [];
afterEach(async () => {
  for (const db of dbs.splice(0)) {
    db.close();
    await db.delete();
  }
});

function timers() {
  const scheduled: Array<{ ms: number; run: () => void; cleared: boolean }> = [];
  return {
    scheduled,
    api: {
      setTimeout: (run: () => void, ms: number) => {
        const handle = { ms, run, cleared: false };
        scheduled.push(handle);
        return handle;
      },
      clearTimeout: (handle: unknown) => {
        if (handle) (handle as { cleared: boolean }).cleared = true;
      },
    },
    /** Delays of the sync schedule (request time-outs are 60 s and excluded). */
    delays: () => scheduled.filter((h) => h.ms !== 60_000).map((h) => h.ms),
  };
}

function makeEngine(overrides: Partial<SyncEngineOptions> = {}) {
  const db = new FuselightDb(`engine-${crypto.randomUUID()}`);
  dbs.push(db);
  let online = true;
  const listeners: Array<(online: boolean) => void> = [];
  const clock = timers();
  const fetch = vi.fn<typeof globalThis.fetch>(async () =>
    Promise.reject(new TypeError('network down')),
  );
  const engine = new SyncEngine({
    db,
    baseUrl: 'http://clinic.invalid',
    auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
    deviceId: DEVICE_ID,
    pullAs: () => CLINICIAN_ID,
    fetch,
    random: () => 0.5,
    timers: clock.api,
    network: {
      isOnline: () => online,
      subscribe: (listener) => {
        listeners.push(listener);
        return () => undefined;
      },
    },
    ...overrides,
  });
  const setOnline = (value: boolean) => {
    online = value;
    for (const listener of listeners) listener(value);
  };
  const records = new RecordsRepository(db);
  const edit = () =>
    records.create('patient', patientFields(), {
      authorId: CLINICIAN_ID,
      deviceId: DEVICE_ID,
      nowMs: Date.now(),
    });
  return { db, engine, fetch, clock, setOnline, edit };
}

describe('back-off', () => {
  it('doubles from the base with jitter between half and all of the ceiling, up to the maximum', () => {
    const policy = { baseMs: 1000, maxMs: 60_000 };
    expect(backoffDelay(1, () => 0, policy)).toBe(500);
    expect(backoffDelay(1, () => 0.999_999, policy)).toBe(1000);
    expect(backoffDelay(2, () => 0.5, policy)).toBe(1500);
    expect(backoffDelay(3, () => 0.5, policy)).toBe(3000);
    expect(backoffDelay(20, () => 0.5, policy)).toBe(45_000);
    expect(backoffDelay(20, () => 0, policy)).toBe(30_000);
  });
});

describe('the sync schedule', () => {
  it('syncs when started, and every 30 s after a sync that went through', async () => {
    const { engine, clock } = makeEngine({ pullAs: () => null });
    engine.start();
    await vi.waitFor(() => expect(clock.delays()).toEqual([30_000]));
    expect(engine.snapshot()).toMatchObject({ phase: 'idle', error: null });
    expect(engine.snapshot().lastSyncedAt).not.toBeNull();
    engine.stop();
  });

  it('retries failures with growing back-off and keeps every Outbox entry', async () => {
    const { engine, clock, edit, db } = makeEngine({ backoff: { baseMs: 1000, maxMs: 60_000 } });
    await edit();
    engine.start();
    await vi.waitFor(() => expect(clock.delays()).toEqual([750]));
    clock.scheduled.at(-1)!.run();
    await vi.waitFor(() => expect(clock.delays()).toEqual([750, 1500]));
    clock.scheduled.at(-1)!.run();
    await vi.waitFor(() => expect(clock.delays()).toEqual([750, 1500, 3000]));
    expect(engine.snapshot()).toMatchObject({
      phase: 'waiting-to-retry',
      consecutiveFailures: 3,
      outboxCount: 1,
    });
    expect(engine.snapshot().error).toMatch(/could not be reached.*kept on this tablet/);
    expect(await db.outbox.count()).toBe(1);
    // Marked as sent: later edits never join a change the server may hold.
    expect((await db.outbox.toArray())[0]?.attempts).toBe(3);
    engine.stop();
  });

  it('does not touch the network while offline and syncs as soon as it returns', async () => {
    const { engine, fetch, setOnline, edit } = makeEngine();
    setOnline(false);
    await edit();
    engine.start();
    await vi.waitFor(() =>
      expect(engine.snapshot()).toMatchObject({ online: false, outboxCount: 1 }),
    );
    expect(fetch).not.toHaveBeenCalled();
    setOnline(true);
    await vi.waitFor(() => expect(fetch).toHaveBeenCalled());
    expect(String(fetch.mock.calls[0]?.[0])).toBe('http://clinic.invalid/api/sync/push');
    engine.stop();
  });

  it('joins a "Sync now" to a sync already running and runs once more after it', async () => {
    let release: () => void = () => undefined;
    const gate = new Promise<void>((resolve) => (release = resolve));
    const fetch = vi.fn<typeof globalThis.fetch>(async () => {
      await gate;
      throw new TypeError('network down');
    });
    const { engine, edit } = makeEngine({ fetch });
    await edit();
    const first = engine.syncNow();
    const second = engine.syncNow();
    release();
    await Promise.all([first, second]);
    expect(fetch).toHaveBeenCalledTimes(2);
  });

  it('runs the after-sync work after each sync tried online, never offline, one at a time, its failures its own', async () => {
    let release: () => void = () => undefined;
    const gate = new Promise<void>((resolve) => (release = resolve));
    let runs = 0;
    const afterSync = vi.fn(async () => {
      runs += 1;
      if (runs === 1) await gate;
      throw new Error('upload failed');
    });
    const { engine, setOnline } = makeEngine({ afterSync, pullAs: () => null });
    setOnline(false);
    expect(await engine.syncOnce()).toEqual({ kind: 'offline' });
    expect(afterSync).not.toHaveBeenCalled();
    setOnline(true);
    expect((await engine.syncOnce()).kind).toBe('synced');
    expect(afterSync).toHaveBeenCalledTimes(1);
    // Two more syncs while the first run is under way: one more run after it, not two at once.
    await engine.syncOnce();
    await engine.syncOnce();
    expect(afterSync).toHaveBeenCalledTimes(1);
    release();
    await engine.afterSyncSettled();
    expect(afterSync).toHaveBeenCalledTimes(2);
    expect(engine.snapshot()).toMatchObject({ phase: 'idle', error: null });
  });

  it('sends a push with the protocol envelope, the author’s token and the entry as a change', async () => {
    const { engine, fetch, edit, db } = makeEngine();
    const id = await edit();
    await engine.syncOnce();
    const [url, init] = fetch.mock.calls[0]!;
    expect(String(url)).toBe('http://clinic.invalid/api/sync/push');
    expect((init?.headers as Record<string, string>).Authorization).toBe('Bearer token');
    const body = JSON.parse(String(init?.body)) as {
      protocol: number;
      schemaVersion: number;
      changes: unknown[];
    };
    const [entry] = await db.outbox.toArray();
    expect(body).toEqual({
      protocol: 1,
      schemaVersion: 1,
      changes: [
        {
          changeId: entry!.changeId,
          collection: 'patient',
          recordId: id,
          baseVersion: 0,
          hlc: entry!.hlc,
          fields: patientFields(),
        },
      ],
    });
  });
});
