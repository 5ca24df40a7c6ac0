// The tablet's sync engine (sync-protocol.md v1): push the Outbox, then pull in pages, when the
// app opens, when the network returns, every 30 s while online and on "Sync now". Failures back
// off exponentially with jitter. Nothing here ever deletes an Outbox entry except on the
// server's acknowledgement: a 401 asks the author to sign in again, a 426/409 stops and says
// which side must be updated, a 5xx or a lost network waits and tries again.
import {
  MAX_CHANGES_PER_PUSH,
  MAX_PULL_LIMIT,
  PROTOCOL_VERSION,
  SCHEMA_VERSION,
  pushResponseSchema,
  type CollectionName,
  type PushChange,
  type PushResponse,
  type PushResult,
} from '@fuselight/shared';
import type { FuselightDb, OutboxEntry } from '../data/db';
import { notifyDataChange, subscribeDataChanges } from '../data/data-events';
import { DEFAULT_BACKOFF, backoffDelay, type BackoffPolicy } from './backoff';
import {
  LAST_SYNCED_KEY,
  applyPullPage,
  applyPushResults,
  claimForSending,
  readCursor,
  type PullApplyTimings,
} from './local-apply';
import {
  beginFullRepull,
  finishFullRepull,
  noteFullRepullPage,
  readFullRepull,
} from './full-repull';
import { PullPageError, isReadPullReset, readPullResponse } from './pull-page';
import type { SyncAuth } from './sync-auth';
import { SyncStatusStore, type SyncStatus } from './sync-status';

export interface SyncClock {
  now(): number;
}

export interface SyncTimers {
  setTimeout(callback: () => void, ms: number): unknown;
  clearTimeout(handle: unknown): void;
}

/** Whether the tablet has a network, and news when that changes. */
export interface NetworkMonitor {
  isOnline(): boolean;
  subscribe(listener: (online: boolean) => void): () => void;
}

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
  /** Told of every push result the server sent, with the entry it answers (tests, audit). */
  onPushResult?: (entry: OutboxEntry, result: PushResult) => void;
}

export type SyncOutcome =
  | { kind: 'synced'; pushed: number; rejected: number; pulled: number }
  | { kind: 'offline' }
  | { kind: 'blocked'; message: string }
  | { kind: 'failed'; message: string };

/** Where the time of the last sync went (for the first-sync benchmark). */
export interface SyncTimings extends PullApplyTimings {
  /**
   * Time spent waiting for answers: the wire, and the JSON parse of a pull page that had not
   * arrived before its turn (the next page is fetched while the current one is written).
   */
  fetchMs: number;
  /** JSON parsing of answers, all of it (for prefetched pages, overlapped with writing). */
  parseMs: number;
  /** Checking pull pages (readPullResponse). */
  validateMs: number;
  pushMs: number;
  totalMs: number;
  pages: number;
  records: number;
}

/** A failure worth retrying later (network, timeout, 5xx, an answer that is not the protocol). */
class TransientSyncError extends Error {}
/** The app or the server must be updated first (426, 409): retrying now will not help. */
class BlockedSyncError extends Error {}

/** A pull request's answer: a session to renew, or the page's parsed JSON. */
type PullAnswer = { kind: 'unauthorized' } | { kind: 'page'; json: unknown; parseMs: number };

const defaultTimers: SyncTimers = {
  setTimeout: (callback, ms) => globalThis.setTimeout(callback, ms),
  clearTimeout: (handle) => globalThis.clearTimeout(handle as ReturnType<typeof setTimeout>),
};

function browserNetwork(): NetworkMonitor {
  return {
    isOnline: () => (typeof navigator === 'undefined' ? true : navigator.onLine !== false),
    subscribe(listener) {
      if (typeof window === 'undefined') return () => undefined;
      const online = () => listener(true);
      const offline = () => listener(false);
      window.addEventListener('online', online);
      window.addEventListener('offline', offline);
      return () => {
        window.removeEventListener('online', online);
        window.removeEventListener('offline', offline);
      };
    },
  };
}

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

function toChange(entry: OutboxEntry): PushChange {
  const change: PushChange = {
    changeId: entry.changeId,
    collection: entry.collection,
    recordId: entry.recordId,
    baseVersion: entry.baseVersion,
    hlc: entry.hlc,
    fields: entry.fields as PushChange['fields'],
  };
  if (entry.deleted !== undefined) change.deleted = entry.deleted;
  return change;
}

async function messageOf(response: Response, fallback: string): Promise<string> {
  try {
    const body = (await response.clone().json()) as { message?: unknown; error?: unknown };
    const message = Array.isArray(body.message) ? body.message.join('; ') : body.message;
    if (typeof message === 'string' && message.length > 0) return message;
    if (typeof body.error === 'string' && body.error.length > 0) return body.error;
  } catch {
    // Not JSON: the fallback says what happened.
  }
  return fallback;
}

export class SyncEngine {
  readonly status: SyncStatusStore;
  private readonly fetchFn: typeof fetch;
  private readonly clock: SyncClock;
  private readonly random: () => number;
  private readonly timers: SyncTimers;
  private readonly network: NetworkMonitor;
  private readonly intervalMs: number;
  private readonly backoff: BackoffPolicy;
  private readonly pageLimit: number;
  private readonly chunkSize: number;
  private readonly maxChanges: number;
  private readonly maxPushBytes: number;
  private readonly requestTimeoutMs: number;
  private readonly schemaVersion: number;
  private readonly yieldToUi: () => Promise<void>;

  private running: Promise<SyncOutcome> | null = null;
  private again = false;
  private timer: unknown = null;
  private started = false;
  private unsubscribers: Array<() => void> = [];
  private failures = 0;
  /** Timings of the last sync. */
  lastTimings: SyncTimings | null = null;

  constructor(private readonly options: SyncEngineOptions) {
    this.fetchFn = options.fetch ?? ((input, init) => globalThis.fetch(input, init));
    this.clock = options.clock ?? { now: () => Date.now() };
    this.random = options.random ?? Math.random;
    this.timers = options.timers ?? defaultTimers;
    this.network = options.network ?? browserNetwork();
    this.intervalMs = options.intervalMs ?? 30_000;
    this.backoff = options.backoff ?? DEFAULT_BACKOFF;
    this.pageLimit = Math.min(options.pageLimit ?? MAX_PULL_LIMIT, MAX_PULL_LIMIT);
    this.chunkSize = options.chunkSize ?? 500;
    this.maxChanges = Math.min(
      options.maxChangesPerPush ?? MAX_CHANGES_PER_PUSH,
      MAX_CHANGES_PER_PUSH,
    );
    this.maxPushBytes = options.maxPushBytes ?? 4 * 1024 * 1024;
    this.requestTimeoutMs = options.requestTimeoutMs ?? 60_000;
    this.schemaVersion = options.schemaVersion ?? SCHEMA_VERSION;
    this.yieldToUi = options.yieldToUi ?? yieldToScreen;
    this.status = new SyncStatusStore({ configured: true, online: this.network.isOnline() });
  }

  get db(): FuselightDb {
    return this.options.db;
  }

  /** Starts the background schedule: a sync now, on reconnect, and every interval while online. */
  start(): void {
    if (this.started) return;
    this.started = true;
    this.unsubscribers.push(
      this.network.subscribe((online) => {
        this.status.update({ online });
        if (online) this.requestSync();
        else this.clearTimer();
      }),
      subscribeDataChanges((change) => {
        if (change.outbox) void this.refreshCounts();
      }),
    );
    void this.loadPersistedStatus();
    this.requestSync();
  }

  stop(): void {
    this.started = false;
    this.clearTimer();
    for (const unsubscribe of this.unsubscribers.splice(0)) unsubscribe();
  }

  /** "Sync now": runs a sync (or joins the one running and runs once more after it). */
  syncNow(): Promise<SyncOutcome> {
    return this.runSync();
  }

  /** For the background schedule: failures are already in the status. */
  private requestSync(): void {
    this.runSync().catch(() => undefined);
  }

  private runSync(): Promise<SyncOutcome> {
    if (this.running) {
      this.again = true;
      return this.running;
    }
    const run = (async () => {
      let outcome = await this.syncOnce();
      while (this.again) {
        this.again = false;
        outcome = await this.syncOnce();
      }
      return outcome;
    })().finally(() => {
      this.running = null;
    });
    this.running = run;
    return run;
  }

  private clearTimer(): void {
    if (this.timer !== null) this.timers.clearTimeout(this.timer);
    this.timer = null;
    this.status.update({ nextAttemptAt: null });
  }

  private schedule(delayMs: number): void {
    this.clearTimer();
    if (!this.started) return;
    this.timer = this.timers.setTimeout(() => {
      this.timer = null;
      this.requestSync();
    }, delayMs);
    this.status.update({ nextAttemptAt: this.clock.now() + delayMs });
  }

  /** Reads what the status keeps across reloads (last sync, a full re-pull) and the counts. */
  async loadPersistedStatus(): Promise<void> {
    const lastSynced = (await this.db.meta.get(LAST_SYNCED_KEY))?.value;
    if (typeof lastSynced === 'number' && this.status.getSnapshot().lastSyncedAt === null) {
      this.status.update({ lastSyncedAt: lastSynced });
    }
    this.status.update({ fullRepull: await readFullRepull(this.db) });
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
    const timings: SyncTimings = {
      fetchMs: 0,
      parseMs: 0,
      validateMs: 0,
      pushMs: 0,
      readMs: 0,
      mergeMs: 0,
      writeMs: 0,
      cursorMs: 0,
      yieldMs: 0,
      totalMs: 0,
      pages: 0,
      records: 0,
    };
    this.status.update({ online: true });
    let outcome: SyncOutcome;
    try {
      const needsSignIn = new Set<string>();
      const pushed = await this.push(needsSignIn, timings);
      const pulled = await this.pull(needsSignIn, timings);
      const now = this.clock.now();
      await this.db.meta.put({ key: LAST_SYNCED_KEY, value: now });
      this.failures = 0;
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
      this.schedule(this.intervalMs);
    } catch (error) {
      const message = error instanceof Error ? error.message : String(error);
      if (error instanceof BlockedSyncError) {
        this.status.update({ phase: 'blocked', progress: null, error: message });
        outcome = { kind: 'blocked', message };
        this.schedule(this.intervalMs);
      } else {
        this.failures += 1;
        const delay = backoffDelay(this.failures, this.random, this.backoff);
        const online = this.network.isOnline();
        this.status.update({
          phase: online ? 'waiting-to-retry' : 'idle',
          online,
          progress: null,
          error: online
            ? message
            : 'Offline: edits are kept on this tablet and sent when the network returns',
          consecutiveFailures: this.failures,
        });
        outcome = online ? { kind: 'failed', message } : { kind: 'offline' };
        if (online) this.schedule(delay);
      }
    }
    timings.totalMs = this.clock.now() - started;
    this.lastTimings = timings;
    await this.refreshCounts();
    return outcome;
  }

  private async request(
    path: string,
    init: RequestInit,
    token: string,
    timings: Pick<SyncTimings, 'fetchMs'>,
  ): Promise<Response> {
    const controller = new AbortController();
    const timeout = this.timers.setTimeout(() => controller.abort(), this.requestTimeoutMs);
    const started = this.clock.now();
    try {
      return await this.fetchFn(`${this.options.baseUrl}${path}`, {
        ...init,
        signal: controller.signal,
        headers: {
          ...(init.headers as Record<string, string> | undefined),
          Authorization: `Bearer ${token}`,
          Accept: 'application/json',
        },
      });
    } catch (error) {
      const why =
        error instanceof Error && error.name === 'AbortError'
          ? 'did not answer in time'
          : 'could not be reached';
      throw new TransientSyncError(
        `The clinic server ${why}; edits are kept on this tablet and sent later`,
      );
    } finally {
      this.timers.clearTimeout(timeout);
      timings.fetchMs += this.clock.now() - started;
    }
  }

  private async readJson(
    response: Response,
    timings: Pick<SyncTimings, 'parseMs'>,
  ): Promise<unknown> {
    const started = this.clock.now();
    try {
      return await response.json();
    } catch {
      throw new TransientSyncError(
        'The clinic server sent an answer this app cannot read; it will try again',
      );
    } finally {
      timings.parseMs += this.clock.now() - started;
    }
  }

  private async failureOf(response: Response, step: 'send' | 'receive'): Promise<Error> {
    if (response.status === 426) {
      return new BlockedSyncError(
        await messageOf(
          response,
          'This app is older than the clinic server accepts: update the app. Your edits stay on this tablet.',
        ),
      );
    }
    if (response.status === 409) {
      return new BlockedSyncError(
        await messageOf(
          response,
          'The clinic server is older than this app: the server must be updated first. Your edits stay on this tablet.',
        ),
      );
    }
    const message = await messageOf(response, `the server answered ${response.status}`);
    return new TransientSyncError(
      step === 'send'
        ? `Could not send edits (${response.status}): ${message}. They stay in the Outbox and are sent again later`
        : `Could not receive updates (${response.status}): ${message}. It will try again`,
    );
  }

  /** Pushes every sendable entry in creation order, each batch under its author's session. */
  private async push(
    needsSignIn: Set<string>,
    timings: SyncTimings,
  ): Promise<{ accepted: number; rejected: number }> {
    const started = this.clock.now();
    const pending = await this.db.outbox.where('state').equals('pending').sortBy('seq');
    const total = pending.length;
    let done = 0;
    let accepted = 0;
    let rejected = 0;
    if (total === 0) return { accepted, rejected };
    this.status.update({ phase: 'pushing', progress: { step: 'push', done, total } });
    const tokens = new Map<string, string | null>();
    // A record whose earlier entry cannot go now holds back its later entries too, so the server
    // always sees one record's changes in the order they were made.
    const heldBack = new Set<string>();
    const queue = [...pending];
    const recordKeyOf = (entry: OutboxEntry) => `${entry.collection}/${entry.recordId}`;
    const tokenOf = async (authorId: string) => {
      if (!tokens.has(authorId)) tokens.set(authorId, await this.options.auth.tokenFor(authorId));
      return tokens.get(authorId) ?? null;
    };
    const holdBack = (entries: OutboxEntry[]) => {
      for (const entry of entries) heldBack.add(recordKeyOf(entry));
    };

    while (queue.length > 0) {
      // The next batch: consecutive sendable entries of one author.
      let author: string | null = null;
      const batch: OutboxEntry[] = [];
      let bytes = 200;
      for (let index = 0; index < queue.length;) {
        const entry = queue[index] as OutboxEntry;
        if (heldBack.has(recordKeyOf(entry))) {
          queue.splice(index, 1);
          continue;
        }
        if (author === null) {
          const token = await tokenOf(entry.authorId);
          if (token === null) {
            needsSignIn.add(entry.authorId);
            holdBack([entry]);
            queue.splice(index, 1);
            continue;
          }
          author = entry.authorId;
        }
        if (entry.authorId !== author) break;
        const size = JSON.stringify(toChange(entry)).length + 1;
        if (
          batch.length > 0 &&
          (batch.length >= this.maxChanges || bytes + size > this.maxPushBytes)
        )
          break;
        batch.push(entry);
        bytes += size;
        queue.splice(index, 1);
      }
      if (author === null || batch.length === 0) break;
      const outcome = await this.pushBatch(author, batch, await tokenOf(author), timings);
      if (outcome.kind === 'unauthorized') {
        needsSignIn.add(author);
        tokens.set(author, null);
        holdBack(batch);
        // The author's other entries wait as well.
        holdBack(queue.filter((entry) => entry.authorId === author));
        continue;
      }
      accepted += outcome.accepted;
      rejected += outcome.rejected;
      done += batch.length;
      this.status.update({ progress: { step: 'push', done, total } });
    }
    timings.pushMs += this.clock.now() - started;
    return { accepted, rejected };
  }

  private async pushBatch(
    authorId: string,
    batch: OutboxEntry[],
    token: string | null,
    timings: SyncTimings,
  ): Promise<{ kind: 'done'; accepted: number; rejected: number } | { kind: 'unauthorized' }> {
    if (token === null) return { kind: 'unauthorized' };
    const claimed = await claimForSending(
      this.db,
      batch.map((entry) => entry.changeId),
    );
    if (claimed.length === 0) return { kind: 'done', accepted: 0, rejected: 0 };
    const body = JSON.stringify({
      protocol: PROTOCOL_VERSION,
      schemaVersion: this.schemaVersion,
      changes: claimed.map(toChange),
    });
    const response = await this.request(
      '/api/sync/push',
      { method: 'POST', body, headers: { 'Content-Type': 'application/json' } },
      token,
      timings,
    );
    if (response.status === 401) {
      await this.options.auth.onUnauthorized(authorId);
      return { kind: 'unauthorized' };
    }
    if ((response.status === 413 || response.status === 400) && claimed.length > 1) {
      // Split until the change the server cannot take is on its own.
      const half = Math.ceil(claimed.length / 2);
      const first = await this.pushBatch(authorId, claimed.slice(0, half), token, timings);
      if (first.kind === 'unauthorized') return first;
      const second = await this.pushBatch(authorId, claimed.slice(half), token, timings);
      if (second.kind === 'unauthorized') return second;
      return {
        kind: 'done',
        accepted: first.accepted + second.accepted,
        rejected: first.rejected + second.rejected,
      };
    }
    if (response.status === 413 || response.status === 400) {
      // One change the server refuses as a request: it stays in the Outbox, marked for its
      // author, with the server's words.
      const entry = claimed[0] as OutboxEntry;
      const reason =
        response.status === 413
          ? 'This edit is too large to send (the server takes at most 5 MB)'
          : await messageOf(response, 'The server could not read this edit');
      await applyPushResults(
        this.db,
        claimed,
        [{ changeId: entry.changeId, status: 'rejected', error: reason }],
        this.clock.now(),
      );
      notifyDataChange({
        collections: [entry.collection],
        recordIds: [entry.recordId],
        outbox: true,
      });
      return { kind: 'done', accepted: 0, rejected: 1 };
    }
    if (!response.ok) throw await this.failureOf(response, 'send');
    const json = await this.readJson(response, timings);
    const parsed = pushResponseSchema.safeParse(json);
    if (!parsed.success) {
      throw new TransientSyncError(
        'The clinic server answered a push in a form this app does not know; it will try again',
      );
    }
    const answer: PushResponse = parsed.data;
    if (this.options.onPushResult) {
      const sent = new Map(claimed.map((entry) => [entry.changeId, entry]));
      for (const result of answer.results) {
        const entry = sent.get(result.changeId);
        if (entry) this.options.onPushResult(entry, result);
      }
    }
    const summary = await applyPushResults(this.db, claimed, answer.results, this.clock.now());
    notifyDataChange({
      collections: summary.collections,
      recordIds: claimed.map((entry) => entry.recordId),
      outbox: true,
    });
    return { kind: 'done', accepted: summary.accepted, rejected: summary.rejected };
  }

  /** Pulls every page after the cursor. Returns how many records were stored. */
  private async pull(needsSignIn: Set<string>, timings: SyncTimings): Promise<number> {
    const userId = this.options.pullAs();
    if (userId === null || needsSignIn.has(userId)) return 0;
    const token = await this.options.auth.tokenFor(userId);
    if (token === null) {
      needsSignIn.add(userId);
      return 0;
    }
    let cursor = await readCursor(this.db);
    const freshDevice = cursor === 0 && (await this.db.records.count()) === 0;
    let received = 0;
    let resets = 0;
    // The page after the one being written, asked for as soon as its cursor is known. It is only
    // read once the page before it is stored with its cursor; if that fails, it is dropped.
    let next: Promise<PullAnswer> | null = null;
    this.status.update({ phase: 'pulling', progress: { step: 'pull', done: 0, total: null } });
    for (;;) {
      const waitStarted = this.clock.now();
      const answer = await (next ?? this.fetchPullPage(cursor, token));
      next = null;
      timings.fetchMs += this.clock.now() - waitStarted;
      timings.parseMs += answer.kind === 'page' ? answer.parseMs : 0;
      if (answer.kind === 'unauthorized') {
        await this.options.auth.onUnauthorized(userId);
        needsSignIn.add(userId);
        return received;
      }
      const validateStarted = this.clock.now();
      let page;
      try {
        // The whole page is checked before any of it is written.
        page = readPullResponse(answer.json);
      } catch (error) {
        if (!(error instanceof PullPageError)) throw error;
        throw new TransientSyncError(
          `The clinic server sent updates in a form this app does not know (${error.message}); it will try again`,
        );
      } finally {
        timings.validateMs += this.clock.now() - validateStarted;
      }
      if (isReadPullReset(page)) {
        resets += 1;
        if (resets > 1 && cursor === 0) {
          throw new TransientSyncError(
            'The clinic server keeps asking this tablet to start over; it will try again',
          );
        }
        cursor = 0;
        // Keeps the Outbox and pending edits; what arrives merges as in any pull.
        const repull = await beginFullRepull(this.db, page.reason, this.clock.now());
        this.status.update({ fullRepull: repull });
        continue;
      }
      if (page.more) {
        next = this.fetchPullPage(page.cursor, token);
        // Read (and its failure reported) on its turn; never an unhandled rejection meanwhile.
        next.catch(() => undefined);
      }
      const applied = await applyPullPage(this.db, page.records, page.cursor, {
        greatestStamp: page.greatestStamp,
        deviceId: this.options.deviceId,
        nowMs: this.clock.now(),
        chunkSize: this.chunkSize,
        freshDevice,
        yieldToUi: this.yieldToUi,
        now: () => this.clock.now(),
        onChunk: (stored) => {
          received += stored;
          this.status.update({ progress: { step: 'pull', done: received, total: null } });
        },
      });
      timings.readMs += applied.timings.readMs;
      timings.mergeMs += applied.timings.mergeMs;
      timings.writeMs += applied.timings.writeMs;
      timings.cursorMs += applied.timings.cursorMs;
      timings.yieldMs += applied.timings.yieldMs;
      timings.pages += 1;
      timings.records += page.records.length;
      if (applied.collections.length > 0) {
        notifyDataChange({ collections: applied.collections as CollectionName[], outbox: false });
      }
      cursor = page.cursor;
      if (this.status.getSnapshot().fullRepull?.finishedAt === null) {
        let repull = await noteFullRepullPage(this.db, page.records.length);
        if (!page.more) repull = await finishFullRepull(this.db, this.clock.now());
        this.status.update({ fullRepull: repull });
      }
      if (!page.more) return received;
      await this.yieldToUi();
    }
  }

  /** Asks for the page after `cursor`; a refusal other than 401 is thrown as the sync's failure. */
  private async fetchPullPage(cursor: number, token: string): Promise<PullAnswer> {
    const spent = { fetchMs: 0, parseMs: 0 };
    const response = await this.request(
      `/api/sync/pull?after=${cursor}&limit=${this.pageLimit}`,
      { method: 'GET' },
      token,
      spent,
    );
    if (response.status === 401) return { kind: 'unauthorized' };
    if (!response.ok) throw await this.failureOf(response, 'receive');
    const json = await this.readJson(response, spent);
    return { kind: 'page', json, parseMs: spent.parseMs };
  }

  /** A copy of the status (for tests and logs). */
  snapshot(): SyncStatus {
    return this.status.getSnapshot();
  }
}
