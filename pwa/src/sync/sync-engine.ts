// The tablet's sync engine (docs/sync-protocol.md, protocol 1): push the Outbox, then pull in pages, when the
// app opens, when the network returns, every 30 s while online and on "Sync now". Failures back
// off exponentially with jitter. Nothing here ever deletes an Outbox entry except on the
// server's acknowledgement: a 401 asks the author to sign in again, a 426/409 stops and says
// which side must be updated, a 5xx or a lost network waits and tries again.
//
// The engine is the public face; its parts can be read one at a time:
// - sync-schedule.ts: when a sync runs (timers, back-off, online/offline, "Sync now" joining);
// - sync-transport.ts: requests, time-outs and the words of a failure;
// - push-batches.ts: sending the Outbox in batches, each under its author's session;
// - pull-pages.ts: receiving pages after the cursor, with the full re-pull bookkeeping;
// - data/outbox-transitions.ts and local-apply.ts: what the answers do to the database;
// - tab-leadership.ts and sync-tabs.ts: with several tabs open, one leads and syncs, and the
//   others follow (their "Sync now" asks the leader; their status is the leader's).
import {
  MAX_CHANGES_PER_PUSH,
  MAX_PULL_LIMIT,
  SCHEMA_VERSION,
  type PushResult,
} from '@fuselight/shared';
import type { FuselightDb, OutboxEntry } from '../data/db';
import { subscribeDataChanges } from '../data/data-events';
import { readSiteScope, subscribeSiteRemoval } from '../data/site-scope';
import { isQuotaExceeded } from '../data/storage-full';
import type { BackoffPolicy } from './backoff';
import { beginFullRepull, readFullRepull } from './full-repull';
import { THIS_BUILD, reviewNewerRecords, type BuildSchema } from './newer-records';
import { LiveStream } from './live-stream';
import { LAST_SYNCED_KEY, readCursor } from './local-apply';
import { PagePuller } from './pull-pages';
import { OutboxPusher } from './push-batches';
import type { SyncAuth } from './sync-auth';
import { SyncSchedule, browserNetwork, type NetworkMonitor } from './sync-schedule';
import { SyncStatusStore, type SyncStatus } from './sync-status';
import type { SyncLeadership } from './tab-leadership';
import type { TabChannel, TabMessage } from './sync-tabs';
import { emptyTimings, type SyncTimings } from './sync-timings';
import {
  BlockedSyncError,
  SyncTransport,
  defaultTimers,
  type SyncClock,
  type SyncTimers,
} from './sync-transport';

export type { NetworkMonitor } from './sync-schedule';
export type { SyncTimings } from './sync-timings';
export type { SyncClock, SyncTimers } from './sync-transport';

export interface SyncEngineOptions {
  db: FuselightDb;
  /** Origin of the clinic server ('' for the app's own origin). */
  baseUrl: string;
  auth: SyncAuth;
  /** This tablet's device id (for the HLC). */
  deviceId: string;
  /** The person whose session pulls (the one using the tablet now); null: nobody signed in. */
  pullAs: () => string | null;
  fetch?: typeof fetch;
  clock?: SyncClock;
  random?: () => number;
  timers?: SyncTimers;
  network?: NetworkMonitor;
  intervalMs?: number;
  backoff?: BackoffPolicy;
  pageLimit?: number;
  chunkSize?: number;
  maxChangesPerPush?: number;
  /** Body size a push stays under (the server refuses 5 MB). */
  maxPushBytes?: number;
  requestTimeoutMs?: number;
  schemaVersion?: number;
  yieldToUi?: () => Promise<void>;
  /** What the build knows of the record schemas (default: this build's; tests stand in another). */
  build?: BuildSchema;
  /** Told of every push result the server sent, with the entry it answers (tests, audit). */
  onPushResult?: (entry: OutboxEntry, result: PushResult) => void;
  /**
   * Work that follows every sync tried online, on the same schedule (at start, on reconnect, on
   * the timer, on "Sync now"): the app uploads attachment files here. The sync does not wait for
   * it; it never runs twice at once (a sync ending meanwhile has it run once more after); its
   * failures are its own and never the sync's.
   */
  afterSync?: () => Promise<unknown>;
  /**
   * Hold the live-changes stream (GET /api/sync/events) while online, and pull as soon as it
   * says the tablet's sites hold a version above the cursor (the app does; tests opt in).
   */
  live?: boolean;
  /** How long a `changed` waits for more before the pull starts (several commits, one pull). */
  liveDebounceMs?: number;
  /** Told when the Review desk's queues may have changed (from the live stream). */
  onReview?: () => void;
  /**
   * Several tabs of the app on one tablet: the engine syncs only while its tab leads, and
   * follows the leader otherwise. Absent: it always syncs (one tab, tests).
   */
  leadership?: SyncLeadership;
  /** Messages to the other tabs' engines (the leader's status, "Sync now" and its outcome). */
  tabChannel?: TabChannel | null;
}

/** A pull page or push result the browser refused to store for lack of space. */
export const STORAGE_FULL_SYNC_WORDS =
  'This tablet’s storage is full, so what the server sent could not be stored. Nothing in the Outbox was lost; free space on the tablet and sync again.';

export type SyncOutcome =
  | { kind: 'synced'; pushed: number; rejected: number; pulled: number }
  | { kind: 'offline' }
  | { kind: 'blocked'; message: string }
  | { kind: 'failed'; message: string };

/**
 * Lets the screen handle input and paint between chunks: scheduler.yield() where the browser has
 * it (the continuation keeps its place ahead of other work), else a MessageChannel task, else a
 * timeout. A setTimeout chain is clamped to 4 ms a step in browsers, which over a first sync's
 * hundred or more yields is time spent doing nothing.
 */
export function yieldToScreen(): Promise<void> {
  const scheduler = (globalThis as { scheduler?: { yield?: () => Promise<void> } }).scheduler;
  if (typeof scheduler?.yield === 'function') return scheduler.yield();
  if (typeof MessageChannel === 'function') {
    return new Promise<void>((resolve) => {
      const channel = new MessageChannel();
      channel.port1.onmessage = () => {
        channel.port1.close();
        resolve();
      };
      channel.port2.postMessage(null);
    });
  }
  return new Promise<void>((resolve) => setTimeout(resolve, 0));
}

export class SyncEngine {
  readonly status: SyncStatusStore;
  private readonly clock: SyncClock;
  private readonly network: NetworkMonitor;
  private readonly schedule: SyncSchedule<SyncOutcome>;
  private readonly pusher: OutboxPusher;
  private readonly puller: PagePuller;
  private readonly live: LiveStream | null;
  private liveTimer: unknown = null;
  private afterSyncRun: Promise<void> | null = null;
  private afterSyncAgain = false;
  private releaseLeadership: (() => void) | null = null;
  private readonly untilStop: Array<() => void> = [];
  /** A following tab's "Sync now" requests that wait for the leader's outcome. */
  private readonly awaitingLeader = new Map<string, (outcome: SyncOutcome) => void>();
  private followTimer: unknown = null;
  private readonly timers: SyncTimers;
  /** Timings of the last sync. */
  lastTimings: SyncTimings | null = null;
  /** Damaged records a full re-pull was already started for (each starts one, once). */
  private readonly repulledForDamage = new Set<string>();

  constructor(private readonly options: SyncEngineOptions) {
    const fetchFn = options.fetch ?? ((input, init) => globalThis.fetch(input, init));
    const clock = options.clock ?? { now: () => Date.now() };
    const timers = options.timers ?? defaultTimers;
    this.clock = clock;
    this.timers = timers;
    this.network = options.network ?? browserNetwork();
    this.status = new SyncStatusStore({ configured: true, online: this.network.isOnline() });
    const status = this.status;
    const transport = new SyncTransport({
      baseUrl: options.baseUrl,
      fetch: fetchFn,
      clock,
      timers,
      requestTimeoutMs: options.requestTimeoutMs ?? 60_000,
    });
    this.schedule = new SyncSchedule({
      run: () => this.syncOnce(),
      status,
      clock,
      timers,
      network: this.network,
      random: options.random ?? Math.random,
      intervalMs: options.intervalMs ?? 30_000,
      ...(options.backoff ? { backoff: options.backoff } : {}),
    });
    this.pusher = new OutboxPusher({
      db: options.db,
      auth: options.auth,
      transport,
      status,
      clock,
      schemaVersion: options.schemaVersion ?? SCHEMA_VERSION,
      maxChanges: Math.min(options.maxChangesPerPush ?? MAX_CHANGES_PER_PUSH, MAX_CHANGES_PER_PUSH),
      maxPushBytes: options.maxPushBytes ?? 4 * 1024 * 1024,
      ...(options.onPushResult ? { onPushResult: options.onPushResult } : {}),
    });
    this.puller = new PagePuller({
      db: options.db,
      auth: options.auth,
      transport,
      status,
      clock,
      deviceId: options.deviceId,
      pullAs: options.pullAs,
      pageLimit: Math.min(options.pageLimit ?? MAX_PULL_LIMIT, MAX_PULL_LIMIT),
      chunkSize: options.chunkSize ?? 500,
      yieldToUi: options.yieldToUi ?? yieldToScreen,
      build: options.build ?? THIS_BUILD,
    });
    this.live = options.live
      ? new LiveStream({
          baseUrl: options.baseUrl,
          fetch: fetchFn,
          token: async () => {
            const person = options.pullAs();
            return person ? options.auth.tokenFor(person) : null;
          },
          network: this.network,
          timers,
          random: options.random ?? Math.random,
          onChanged: (version) => void this.heardVersion(version, timers),
          onReview: () => {
            options.onReview?.();
            // Only the leading tab holds the stream: the other tabs' desks hear it from here.
            this.options.tabChannel?.post({ kind: 'review' });
          },
          onState: (live) => status.update({ live }),
          onRefused: () => this.schedule.request(),
        })
      : null;
  }

  /** A `changed` event: pull soon when the server holds a version beyond the cursor. */
  private async heardVersion(version: number, timers: SyncTimers): Promise<void> {
    if (version <= (await readCursor(this.db))) return;
    if (this.liveTimer !== null) return;
    this.liveTimer = timers.setTimeout(() => {
      this.liveTimer = null;
      this.schedule.request();
    }, this.options.liveDebounceMs ?? 50);
  }

  get db(): FuselightDb {
    return this.options.db;
  }

  /**
   * Starts the background schedule: a sync now, on reconnect, and every interval while online.
   * With several tabs, the schedule runs only while this tab leads.
   */
  start(): void {
    const { leadership, tabChannel } = this.options;
    if (!leadership) {
      this.startSchedule();
      return;
    }
    if (this.releaseLeadership) return;
    this.status.update({ tabRole: 'following' });
    if (tabChannel) {
      this.untilStop.push(tabChannel.subscribe((message) => this.onTabMessage(message)));
      tabChannel.post({ kind: 'status-wanted' });
    }
    this.untilStop.push(
      subscribeDataChanges((change) => {
        if (change.outbox && this.status.getSnapshot().tabRole === 'following') {
          void this.refreshCounts();
        }
      }),
    );
    this.follow();
    this.releaseLeadership = leadership.campaign({
      onLead: () => this.lead(),
      onLose: () => this.follow(),
    });
  }

  stop(): void {
    this.schedule.stop();
    this.stopLive();
    this.clearFollowTimer();
    this.releaseLeadership?.();
    this.releaseLeadership = null;
    for (const undo of this.untilStop.splice(0)) undo();
    for (const resolve of this.awaitingLeader.values()) {
      resolve({
        kind: 'failed',
        message: 'Sync stopped in this tab before the other tab answered',
      });
    }
    this.awaitingLeader.clear();
  }

  /** "Sync now": runs a sync (or joins the one running and runs once more after it). */
  syncNow(): Promise<SyncOutcome> {
    const channel = this.options.tabChannel;
    if (this.status.getSnapshot().tabRole !== 'following' || !channel) {
      return this.schedule.syncNow();
    }
    // Another tab syncs this tablet: ask it, and hear how it went.
    const requestId = `${this.clock.now()}-${Math.random().toString(36).slice(2)}`;
    return new Promise<SyncOutcome>((resolve) => {
      this.awaitingLeader.set(requestId, resolve);
      channel.post({ kind: 'sync-now', requestId });
    });
  }

  /** Whether this engine's tab syncs the tablet now (alone or leading the tabs). */
  get syncsHere(): boolean {
    return this.status.getSnapshot().tabRole !== 'following';
  }

  private startSchedule(): void {
    this.schedule.start(
      [
        subscribeDataChanges((change) => {
          if (change.outbox) void this.refreshCounts();
        }),
        this.status.subscribe(() => this.announceStatus()),
        // Records of a site the tablet no longer serves were removed (data/site-scope.ts).
        subscribeSiteRemoval((note) => this.status.update({ siteRemoval: note })),
      ],
      () => void this.loadPersistedStatus(),
    );
    this.live?.start();
  }

  /** This tab leads: it syncs, tells the followers, and answers the "Sync now" left waiting. */
  private lead(): void {
    this.clearFollowTimer();
    this.status.update({ tabRole: 'leading' });
    this.startSchedule();
    this.options.tabChannel?.post({ kind: 'leading' });
    this.announceStatus();
    for (const [requestId, resolve] of [...this.awaitingLeader]) {
      this.awaitingLeader.delete(requestId);
      void this.schedule.syncNow().then(resolve);
    }
  }

  /**
   * This tab follows: no push, no pull. Its status is the leader's (sync-tabs.ts); the counts
   * and the last sync are also read from the database now and then, for browsers without a
   * channel between tabs.
   */
  private follow(): void {
    this.schedule.stop();
    // Only the leading tab holds the live stream; a follower hears of changes from it.
    this.stopLive();
    this.status.update({ tabRole: 'following', phase: 'idle', progress: null });
    const look = () => {
      this.followTimer = null;
      void this.loadPersistedStatus().catch(() => undefined);
      this.followTimer = this.timers.setTimeout(look, this.options.intervalMs ?? 30_000);
    };
    this.clearFollowTimer();
    look();
  }

  private stopLive(): void {
    this.live?.stop();
    if (this.liveTimer !== null) this.timers.clearTimeout(this.liveTimer);
    this.liveTimer = null;
  }

  private clearFollowTimer(): void {
    if (this.followTimer !== null) this.timers.clearTimeout(this.followTimer);
    this.followTimer = null;
  }

  private announceStatus(): void {
    const channel = this.options.tabChannel;
    if (!channel || this.status.getSnapshot().tabRole !== 'leading') return;
    channel.post({ kind: 'status', status: this.status.getSnapshot() });
  }

  private onTabMessage(message: TabMessage): void {
    const role = this.status.getSnapshot().tabRole;
    switch (message.kind) {
      case 'status':
        if (role === 'following') {
          this.status.update({ ...message.status, configured: true, tabRole: 'following' });
        }
        return;
      case 'leading':
        // A new leader: whatever this tab asked of the old one is asked again.
        for (const requestId of this.awaitingLeader.keys()) {
          this.options.tabChannel?.post({ kind: 'sync-now', requestId });
        }
        return;
      case 'status-wanted':
        this.announceStatus();
        return;
      case 'sync-now':
        if (role !== 'leading') return;
        void this.schedule.syncNow().then((outcome) => {
          this.options.tabChannel?.post({ kind: 'outcome', requestId: message.requestId, outcome });
        });
        return;
      case 'review':
        if (role === 'following') this.options.onReview?.();
        return;
      case 'outcome': {
        const resolve = this.awaitingLeader.get(message.requestId);
        this.awaitingLeader.delete(message.requestId);
        resolve?.(message.outcome);
        return;
      }
    }
  }

  /** Reads what the status keeps across reloads (last sync, a full re-pull) and the counts. */
  async loadPersistedStatus(): Promise<void> {
    const lastSynced = (await this.db.meta.get(LAST_SYNCED_KEY))?.value;
    if (typeof lastSynced === 'number' && this.status.getSnapshot().lastSyncedAt === null) {
      this.status.update({ lastSyncedAt: lastSynced });
    }
    this.status.update({
      fullRepull: await readFullRepull(this.db),
      newerRecords: await reviewNewerRecords(this.db, this.options.build ?? THIS_BUILD),
      siteRemoval: (await readSiteScope(this.db))?.lastRemoval ?? null,
    });
    await this.refreshCounts();
  }

  async refreshCounts(): Promise<void> {
    const [total, rejected] = await Promise.all([
      this.db.outbox.count(),
      this.db.outbox.where('state').equals('rejected').count(),
    ]);
    this.status.update({
      outboxCount: total,
      pendingCount: total - rejected,
      rejectedCount: rejected,
    });
  }

  /** One push then pull; the schedule decides what comes next from the outcome. */
  async syncOnce(): Promise<SyncOutcome> {
    if (!this.network.isOnline()) {
      this.status.update({ online: false, phase: 'idle', progress: null });
      await this.refreshCounts();
      return { kind: 'offline' };
    }
    const started = this.clock.now();
    const timings = emptyTimings();
    this.status.update({ online: true });
    let outcome: SyncOutcome;
    try {
      const needsSignIn = new Set<string>();
      const pushed = await this.pusher.push(needsSignIn, timings);
      await this.repullForDamagedRecords();
      const pulled = await this.puller.pull(needsSignIn, timings);
      const now = this.clock.now();
      await this.db.meta.put({ key: LAST_SYNCED_KEY, value: now });
      const signInWords =
        needsSignIn.size > 0
          ? 'Some edits wait until their author signs in again on this tablet'
          : null;
      this.status.update({
        phase: 'idle',
        progress: null,
        lastSyncedAt: now,
        error: signInWords,
        needsSignIn: [...needsSignIn],
        consecutiveFailures: 0,
      });
      outcome = { kind: 'synced', pushed: pushed.accepted, rejected: pushed.rejected, pulled };
      this.schedule.succeeded();
    } catch (error) {
      const message = isQuotaExceeded(error)
        ? STORAGE_FULL_SYNC_WORDS
        : error instanceof Error
          ? error.message
          : String(error);
      if (error instanceof BlockedSyncError) {
        this.status.update({ phase: 'blocked', progress: null, error: message });
        outcome = { kind: 'blocked', message };
        this.schedule.blocked();
      } else {
        const failures = this.schedule.failed();
        const online = this.network.isOnline();
        this.status.update({
          phase: online ? 'waiting-to-retry' : 'idle',
          online,
          progress: null,
          error: online
            ? message
            : 'Offline: edits are kept on this tablet and sent when the network returns',
          consecutiveFailures: failures,
        });
        outcome = online ? { kind: 'failed', message } : { kind: 'offline' };
        if (online) this.schedule.retry();
      }
    }
    timings.totalMs = this.clock.now() - started;
    this.lastTimings = timings;
    this.runAfterSync();
    await this.refreshCounts();
    return outcome;
  }

  /**
   * A record of this database failed authentication (altered or damaged on the tablet): it is
   * left out of every answer, and a full re-pull fetches a good copy from the server (its version
   * may be behind the cursor). Once per damaged record; a good copy written clears the report.
   */
  private async repullForDamagedRecords(): Promise<void> {
    const fresh = this.db.vault
      .damagedValues()
      .filter((d) => d.database === this.db.name && d.table === 'records')
      .map((d) => d.key)
      .filter((key) => !this.repulledForDamage.has(key));
    if (fresh.length === 0) return;
    for (const key of fresh) this.repulledForDamage.add(key);
    const repull = await beginFullRepull(this.db, 'damaged', this.clock.now());
    this.status.update({ fullRepull: repull });
  }

  /** Starts the `afterSync` work, or has it run once more when it is running already. */
  private runAfterSync(): void {
    const work = this.options.afterSync;
    if (!work) return;
    if (this.afterSyncRun) {
      this.afterSyncAgain = true;
      return;
    }
    this.afterSyncRun = (async () => {
      do {
        this.afterSyncAgain = false;
        await Promise.resolve()
          .then(work)
          .catch(() => undefined);
      } while (this.afterSyncAgain);
    })().finally(() => {
      this.afterSyncRun = null;
    });
  }

  /** Resolves when the `afterSync` work under way (if any) is done (tests, sign-out). */
  async afterSyncSettled(): Promise<void> {
    await this.afterSyncRun;
  }

  /** A copy of the status (for tests and logs). */
  snapshot(): SyncStatus {
    return this.status.getSnapshot();
  }
}
