// Several tabs of the app on one tablet (fake-indexeddb, one database opened by two "tabs"):
// one leads and syncs, the other follows, and leadership passes when the leader goes.
import { afterEach, describe, expect, it, vi } from 'vitest';
import { FuselightDb } from '../data/db';
import { RecordsRepository } from '../data/records-repository';
import { CLINICIAN_ID, DEVICE_ID, patientFields } from '../data/test-fixtures';
import { SyncEngine, type SyncEngineOptions } from './sync-engine';
import type { TabChannel, TabMessage } from './sync-tabs';
import {
  LEADER_LEASE_KEY,
  leaseLeadership,
  webLocksLeadership,
  type LockManagerLike,
} from './tab-leadership';

const opened: FuselightDb[] = [];
afterEach(async () => {
  const names = new Set(opened.map((db) => db.name));
  for (const db of opened.splice(0)) db.close();
  for (const name of names) await new FuselightDb(name).delete();
});

/** Two connections to one database, as two tabs of one browser profile have. */
function twoTabs() {
  const name = `tabs-${crypto.randomUUID()}`;
  const first = new FuselightDb(name);
  const second = new FuselightDb(name);
  opened.push(first, second);
  return [first, second] as const;
}

/** Timers run by hand, and a clock moved by hand. */
function manualTime(start = Date.parse('2026-12-04T08:00:00.000Z')) {
  let now = start;
  let due: Array<{ at: number; run: () => void; cleared: boolean }> = [];
  return {
    clock: { now: () => now },
    timers: {
      setTimeout: (run: () => void, ms: number) => {
        const handle = { at: now + ms, run, cleared: false };
        due.push(handle);
        return handle;
      },
      clearTimeout: (handle: unknown) => {
        if (handle) (handle as { cleared: boolean }).cleared = true;
      },
    },
    /** Moves the clock and runs what fell due. */
    advance(ms: number) {
      now += ms;
      const ready = due.filter((t) => !t.cleared && t.at <= now);
      due = due.filter((t) => !ready.includes(t));
      for (const t of ready) t.run();
    },
  };
}

/** An in-memory stand-in for navigator.locks: exclusive locks granted in the order asked. */
function fakeLocks(): LockManagerLike {
  const queues = new Map<string, Array<() => void>>();
  const held = new Set<string>();
  const grantNext = (name: string) => {
    const next = queues.get(name)?.shift();
    if (next) next();
  };
  return {
    request(name, options, callback) {
      return new Promise((resolve, reject) => {
        const grant = () => {
          held.add(name);
          void callback({ name })
            .then(resolve, reject)
            .finally(() => {
              held.delete(name);
              grantNext(name);
            });
        };
        options.signal?.addEventListener('abort', () => {
          const queue = queues.get(name) ?? [];
          const at = queue.indexOf(grant);
          if (at >= 0) {
            queue.splice(at, 1);
            reject(new DOMException('aborted', 'AbortError'));
          }
        });
        if (held.has(name)) queues.set(name, [...(queues.get(name) ?? []), grant]);
        else grant();
      });
    },
  };
}

/** BroadcastChannel's behaviour in memory: every other member hears a message, not its sender. */
function channelHub() {
  const members = new Set<{ listeners: Set<(m: TabMessage) => void> }>();
  return (): TabChannel => {
    const me = { listeners: new Set<(m: TabMessage) => void>() };
    members.add(me);
    return {
      post(message) {
        const copy = structuredClone(message);
        queueMicrotask(() => {
          for (const member of members) {
            if (member !== me) for (const listener of member.listeners) listener(copy);
          }
        });
      },
      subscribe(listener) {
        me.listeners.add(listener);
        return () => me.listeners.delete(listener);
      },
      close: () => {
        members.delete(me);
      },
    };
  };
}

const settle = () => new Promise((resolve) => setTimeout(resolve, 20));

describe('leadership by a lease in IndexedDB (browsers without Web Locks)', () => {
  it('lets one of two tabs lead, and hands over when the leader stops', async () => {
    const [dbA, dbB] = twoTabs();
    const time = manualTime();
    const roles: string[] = [];
    const campaign = (db: FuselightDb, tabId: string) =>
      leaseLeadership({ db, tabId, clock: time.clock, timers: time.timers }).campaign({
        onLead: () => roles.push(`${tabId} leads`),
        onLose: () => roles.push(`${tabId} follows`),
      });
    const stopA = campaign(dbA, 'tab-a');
    await vi.waitFor(() => expect(roles).toEqual(['tab-a leads']));
    const stopB = campaign(dbB, 'tab-b');
    await settle();
    time.advance(3_000);
    await settle();
    expect(roles).toEqual(['tab-a leads']);
    expect((await dbB.meta.get(LEADER_LEASE_KEY))?.value).toMatchObject({ tabId: 'tab-a' });

    stopA();
    await vi.waitFor(async () => expect(await dbB.meta.get(LEADER_LEASE_KEY)).toBeUndefined());
    time.advance(3_000);
    await vi.waitFor(() => expect(roles).toEqual(['tab-a leads', 'tab-b leads']));
    stopB();
  });

  it('takes over from a leader that stopped renewing, which then steps down', async () => {
    const [dbA, dbB] = twoTabs();
    const timeA = manualTime();
    const timeB = manualTime();
    const roles: string[] = [];
    // Tab A's timers never run again (a frozen tab); the clock moves for both.
    let now = timeA.clock.now();
    const clock = { now: () => now };
    const stopA = leaseLeadership({
      db: dbA,
      tabId: 'tab-a',
      clock,
      timers: timeA.timers,
    }).campaign({ onLead: () => roles.push('a leads'), onLose: () => roles.push('a follows') });
    await vi.waitFor(() => expect(roles).toEqual(['a leads']));
    const stopB = leaseLeadership({
      db: dbB,
      tabId: 'tab-b',
      clock,
      timers: timeB.timers,
    }).campaign({ onLead: () => roles.push('b leads'), onLose: () => roles.push('b follows') });
    await settle();
    now += 9_000;
    timeB.advance(3_000);
    await settle();
    expect(roles).toEqual(['a leads']);
    now += 2_000; // eleven seconds without renewal: past the ten-second lease
    timeB.advance(3_000);
    await vi.waitFor(() => expect(roles).toEqual(['a leads', 'b leads']));

    // Tab A wakes up, finds tab B's lease and stops leading: never two leaders at once.
    timeA.advance(100_000);
    await vi.waitFor(() => expect(roles).toEqual(['a leads', 'b leads', 'a follows']));
    stopA();
    stopB();
  });
});

describe('leadership by Web Locks', () => {
  it('grants the lock to the next tab waiting once the leader releases it', async () => {
    const locks = fakeLocks();
    const roles: string[] = [];
    const stopA = webLocksLeadership('fuselight-sync:t1', locks).campaign({
      onLead: () => roles.push('a leads'),
      onLose: () => roles.push('a follows'),
    });
    const stopB = webLocksLeadership('fuselight-sync:t1', locks).campaign({
      onLead: () => roles.push('b leads'),
      onLose: () => roles.push('b follows'),
    });
    const stopC = webLocksLeadership('fuselight-sync:t1', locks).campaign({
      onLead: () => roles.push('c leads'),
      onLose: () => roles.push('c follows'),
    });
    await settle();
    expect(roles).toEqual(['a leads']);
    stopB(); // closed while waiting: it never leads
    stopA();
    await vi.waitFor(() => expect(roles).toEqual(['a leads', 'c leads']));
    stopC();
  });

  it('gives each tablet its own lock', async () => {
    const locks = fakeLocks();
    const roles: string[] = [];
    const stops = ['t1', 't2'].map((tablet) =>
      webLocksLeadership(`fuselight-sync:${tablet}`, locks).campaign({
        onLead: () => roles.push(`${tablet} leads`),
        onLose: () => undefined,
      }),
    );
    await vi.waitFor(() => expect(roles).toEqual(['t1 leads', 't2 leads']));
    for (const stop of stops) stop();
  });
});

describe('two tabs syncing one tablet', () => {
  /** A server that answers every push as applied and records what was pushed. */
  function countingServer() {
    const pushedChangeIds: string[] = [];
    let version = 0;
    const fetchFn = vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
      const url = new URL(String(input));
      if (url.pathname === '/api/sync/push') {
        const body = JSON.parse(String(init?.body)) as { changes: Array<{ changeId: string }> };
        pushedChangeIds.push(...body.changes.map((c) => c.changeId));
        return Response.json({
          results: body.changes.map((change) => ({
            changeId: change.changeId,
            status: 'applied',
            version: (version += 1),
            conflicts: [],
          })),
          serverTime: new Date().toISOString(),
        });
      }
      return Response.json({ records: [], cursor: version, more: false });
    });
    return { fetchFn, pushedChangeIds };
  }

  function tab(db: FuselightDb, shared: Partial<SyncEngineOptions>, fetchFn: typeof fetch) {
    const engine = new SyncEngine({
      db,
      baseUrl: 'http://clinic.test',
      auth: { tokenFor: async () => 'token', onUnauthorized: async () => undefined },
      deviceId: DEVICE_ID,
      pullAs: () => CLINICIAN_ID,
      fetch: fetchFn,
      random: () => 0.5,
      timers: { setTimeout: () => null, clearTimeout: () => undefined },
      network: { isOnline: () => true, subscribe: () => () => undefined },
      yieldToUi: async () => undefined,
      ...shared,
    });
    return engine;
  }

  it('pushes each Outbox entry once, from the leading tab only, and both tabs show the result', async () => {
    const [dbA, dbB] = twoTabs();
    const locks = fakeLocks();
    const hub = channelHub();
    const serverA = countingServer();
    const serverB = countingServer();
    const a = tab(
      dbA,
      { leadership: webLocksLeadership('fuselight-sync:x', locks), tabChannel: hub() },
      serverA.fetchFn as unknown as typeof fetch,
    );
    const b = tab(
      dbB,
      { leadership: webLocksLeadership('fuselight-sync:x', locks), tabChannel: hub() },
      serverB.fetchFn as unknown as typeof fetch,
    );
    a.start();
    await vi.waitFor(() => expect(a.snapshot().tabRole).toBe('leading'));
    b.start();
    await settle();
    expect(b.snapshot().tabRole).toBe('following');

    // An edit in each tab, then "Sync now" in the following one.
    const ctx = () => ({ authorId: CLINICIAN_ID, deviceId: DEVICE_ID, nowMs: Date.now() });
    await new RecordsRepository(dbA).create('patient', patientFields(), ctx());
    await new RecordsRepository(dbB).create('patient', patientFields(), ctx());
    expect(await dbA.outbox.count()).toBe(2);
    const outcome = await b.syncNow();
    expect(outcome).toMatchObject({ kind: 'synced', pushed: 2 });
    await b.syncNow();

    expect(serverB.fetchFn).not.toHaveBeenCalled();
    expect(serverA.pushedChangeIds).toHaveLength(2);
    expect(new Set(serverA.pushedChangeIds).size).toBe(2);
    expect(await dbB.outbox.count()).toBe(0);
    await vi.waitFor(() => {
      expect(b.snapshot()).toMatchObject({ outboxCount: 0, tabRole: 'following' });
      expect(b.snapshot().lastSyncedAt).not.toBeNull();
    });

    // The leader closes: the follower leads and syncs from then on.
    a.stop();
    await vi.waitFor(() => expect(b.snapshot().tabRole).toBe('leading'));
    await new RecordsRepository(dbB).create('patient', patientFields(), ctx());
    expect(await b.syncNow()).toMatchObject({ kind: 'synced', pushed: 1 });
    expect(serverB.pushedChangeIds).toHaveLength(1);
    expect(serverA.pushedChangeIds).toHaveLength(2);
    b.stop();
  });
  it('tells a following tab’s Review desk what the leader’s live stream heard', async () => {
    const [dbA, dbB] = twoTabs();
    const locks = fakeLocks();
    const hub = channelHub();
    const server = countingServer();
    const heardA = vi.fn();
    const heardB = vi.fn();
    const fetchFn = server.fetchFn as unknown as typeof fetch;
    const a = tab(
      dbA,
      {
        leadership: webLocksLeadership('fuselight-sync:x', locks),
        tabChannel: hub(),
        onReview: heardA,
      },
      fetchFn,
    );
    const b = tab(
      dbB,
      {
        leadership: webLocksLeadership('fuselight-sync:x', locks),
        tabChannel: hub(),
        onReview: heardB,
      },
      fetchFn,
    );
    a.start();
    await vi.waitFor(() => expect(a.snapshot().tabRole).toBe('leading'));
    b.start();
    await settle();
    // What the leader posts when its stream says the desk's queues moved.
    const leaderSays = hub();
    leaderSays.post({ kind: 'review' });
    await settle();
    expect(heardB).toHaveBeenCalledTimes(1);
    // The leading tab heard it from its own stream already; a relayed copy is not taken twice.
    expect(heardA).not.toHaveBeenCalled();
    a.stop();
    b.stop();
  });
});
