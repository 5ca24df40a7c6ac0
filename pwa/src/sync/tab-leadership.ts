// Which tab of the app syncs on this tablet. Two tabs or windows of the app share one IndexedDB
// and one Outbox; if both pushed and pulled they would send the same entries twice and write the
// same pages over each other. So one tab leads and syncs, and the others follow its results
// (sync-tabs.ts carries them across). Leadership passes on when the leading tab closes or stops.
// - With the Web Locks API (navigator.locks): the leader holds an exclusive lock named for the
//   tablet until it stops or the tab closes; the browser then grants it to the next tab waiting.
// - Without it: a lease in the records database's meta table (no schema change), taken and
//   renewed in readwrite transactions, which IndexedDB runs one at a time across tabs. A leader
//   that stops renewing (closed, frozen) loses it after `leaseMs`; a leader that finds another
//   tab's lease steps down. Between a frozen leader's lease running out and it noticing, two tabs
//   may push the same entry: the server answers the second one as a replay, so nothing is doubled.
import type { FuselightDb } from '../data/db';
import type { SyncClock, SyncTimers } from './sync-transport';

export interface LeadershipCallbacks {
  /** This tab now leads: it syncs from here on. */
  onLead(): void;
  /** This tab no longer leads (only a lease can be lost): it stops syncing. */
  onLose(): void;
}

export interface SyncLeadership {
  readonly kind: 'web-locks' | 'lease';
  /** Asks to lead; the callbacks say when this tab leads or stops leading. Returns the release. */
  campaign(callbacks: LeadershipCallbacks): () => void;
}

/** The lock (or lease owner) name of one tablet: one leader per enrolled tablet and origin. */
export function syncLockName(deviceId: string): string {
  return `fuselight-sync:${deviceId}`;
}

/** The part of the Web Locks API used here (navigator.locks). */
export interface LockManagerLike {
  request(
    name: string,
    options: { mode: 'exclusive'; signal?: AbortSignal },
    callback: (lock: unknown) => Promise<void>,
  ): Promise<unknown>;
}

/** Leads while holding the tablet's Web Lock; the browser releases it when the tab closes. */
export function webLocksLeadership(name: string, locks: LockManagerLike): SyncLeadership {
  return {
    kind: 'web-locks',
    campaign({ onLead }) {
      const abort = new AbortController();
      let stopped = false;
      let letGo: () => void = () => undefined;
      const held = new Promise<void>((resolve) => {
        letGo = resolve;
      });
      locks
        .request(name, { mode: 'exclusive', signal: abort.signal }, async () => {
          if (stopped) return;
          onLead();
          await held;
        })
        // Stopped while still waiting: the request ends with an AbortError, which is expected.
        .catch(() => undefined);
      return () => {
        stopped = true;
        abort.abort();
        letGo();
      };
    },
  };
}

/** Key of the lease in the records database's meta table. */
export const LEADER_LEASE_KEY = 'syncLeaderLease';

export interface LeaderLease {
  tabId: string;
  /** Epoch ms after which another tab may take the lease. */
  expiresAt: number;
}

export interface LeaseLeadershipOptions {
  db: FuselightDb;
  /** This tab's own id (random per tab). */
  tabId: string;
  clock: SyncClock;
  timers: SyncTimers;
  /** How long a lease lasts without renewal. */
  leaseMs?: number;
  /** How often the leader renews and a follower looks again. */
  renewMs?: number;
}

/** Leads while holding a lease in IndexedDB: for browsers without the Web Locks API. */
export function leaseLeadership(options: LeaseLeadershipOptions): SyncLeadership {
  const { db, tabId, clock, timers } = options;
  const leaseMs = options.leaseMs ?? 10_000;
  const renewMs = options.renewMs ?? 3_000;

  /** Takes or renews the lease when it is free, expired or this tab's; true when it is ours. */
  const claim = () =>
    db.transaction('rw', db.meta, async () => {
      const now = clock.now();
      const lease = (await db.meta.get(LEADER_LEASE_KEY))?.value as LeaderLease | undefined;
      if (lease && lease.tabId !== tabId && lease.expiresAt > now) return false;
      const next: LeaderLease = { tabId, expiresAt: now + leaseMs };
      await db.meta.put({ key: LEADER_LEASE_KEY, value: next });
      return true;
    });

  /** Gives the lease up at once (when it is still ours), so the next tab need not wait. */
  const giveUp = () =>
    db.transaction('rw', db.meta, async () => {
      const lease = (await db.meta.get(LEADER_LEASE_KEY))?.value as LeaderLease | undefined;
      if (lease?.tabId === tabId) await db.meta.delete(LEADER_LEASE_KEY);
    });

  return {
    kind: 'lease',
    campaign({ onLead, onLose }) {
      let stopped = false;
      let leading = false;
      let timer: unknown = null;
      const tick = async () => {
        timer = null;
        if (stopped) return;
        // A database that cannot be written (closed, erased) leaves this tab following.
        const ours = await claim().catch(() => false);
        if (stopped) {
          if (ours) await giveUp().catch(() => undefined);
          return;
        }
        if (ours && !leading) {
          leading = true;
          onLead();
        } else if (!ours && leading) {
          leading = false;
          onLose();
        }
        timer = timers.setTimeout(() => void tick(), renewMs);
      };
      void tick();
      const stop = () => {
        if (stopped) return;
        stopped = true;
        if (timer !== null) timers.clearTimeout(timer);
        timer = null;
        if (leading) {
          leading = false;
          void giveUp().catch(() => undefined);
        }
        if (typeof window !== 'undefined') window.removeEventListener('pagehide', stop);
      };
      // A closing tab hands over at once instead of making the others wait for the lease to end.
      if (typeof window !== 'undefined') window.addEventListener('pagehide', stop);
      return stop;
    },
  };
}

/** A random id for this tab (the lease owner). */
export function newTabId(): string {
  return typeof crypto !== 'undefined' && typeof crypto.randomUUID === 'function'
    ? crypto.randomUUID()
    : `tab-${Math.random().toString(36).slice(2)}-${Date.now().toString(36)}`;
}

/** The browser's way: Web Locks where the browser has them, else the lease in IndexedDB. */
export function browserLeadership(
  deviceId: string,
  db: FuselightDb,
  clock: SyncClock,
  timers: SyncTimers,
): SyncLeadership {
  const locks =
    typeof navigator === 'undefined'
      ? undefined
      : (navigator as Navigator & { locks?: LockManagerLike }).locks;
  if (locks && typeof locks.request === 'function') {
    return webLocksLeadership(syncLockName(deviceId), locks);
  }
  return leaseLeadership({ db, tabId: newTabId(), clock, timers });
}
