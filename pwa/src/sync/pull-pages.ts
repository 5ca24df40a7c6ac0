// Receiving: every page after the pull cursor, under the session of the person using the tablet.
// Each page is checked whole (pull-page.ts) before any of it is written, then stored in chunks
// with its cursor (local-apply.ts); the next page is asked for while the current one is written.
// A reset answer (the server asks this tablet to start over) moves the cursor back to 0 and
// records a full re-pull (full-repull.ts), whose received count and end are noted page by page.
import type { CollectionName } from '@fuselight/shared';
import type { FuselightDb } from '../data/db';
import { notifyDataChange } from '../data/data-events';
import { beginFullRepull, finishFullRepull, noteFullRepullPage } from './full-repull';
import { applyPullPage, readCursor } from './local-apply';
import { reviewNewerRecords, type BuildSchema } from './newer-records';
import { PullPageError, isReadPullReset, readPullResponse } from './pull-page';
import type { SyncAuth } from './sync-auth';
import type { SyncStatusStore } from './sync-status';
import type { SyncTimings } from './sync-timings';
import { TransientSyncError, type SyncClock, type SyncTransport } from './sync-transport';

export interface PagePullerOptions {
  db: FuselightDb;
  auth: SyncAuth;
  transport: SyncTransport;
  status: SyncStatusStore;
  clock: SyncClock;
  /** This tablet's device id (for the HLC). */
  deviceId: string;
  /** The person whose session pulls; null: nobody signed in. */
  pullAs: () => string | null;
  pageLimit: number;
  chunkSize: number;
  yieldToUi: () => Promise<void>;
  /** What this build knows of the record schemas (another build's in tests). */
  build: BuildSchema;
}

/** A pull request's answer: a session to renew, or the page's parsed JSON. */
type PullAnswer = { kind: 'unauthorized' } | { kind: 'page'; json: unknown; parseMs: number };

export class PagePuller {
  constructor(private readonly options: PagePullerOptions) {}

  /** Pulls every page after the cursor. Returns how many records were stored. */
  async pull(needsSignIn: Set<string>, timings: SyncTimings): Promise<number> {
    const { db, auth, clock, status } = this.options;
    const userId = this.options.pullAs();
    if (userId === null || needsSignIn.has(userId)) return 0;
    const token = await auth.tokenFor(userId);
    if (token === null) {
      needsSignIn.add(userId);
      return 0;
    }
    let cursor = await readCursor(db);
    const freshDevice = cursor === 0 && (await db.records.count()) === 0;
    let received = 0;
    let resets = 0;
    // The page after the one being written, asked for as soon as its cursor is known. It is only
    // read once the page before it is stored with its cursor; if that fails, it is dropped.
    let next: Promise<PullAnswer> | null = null;
    status.update({ phase: 'pulling', progress: { step: 'pull', done: 0, total: null } });
    for (;;) {
      const waitStarted = clock.now();
      const answer = await (next ?? this.fetchPage(cursor, token));
      next = null;
      timings.fetchMs += clock.now() - waitStarted;
      timings.parseMs += answer.kind === 'page' ? answer.parseMs : 0;
      if (answer.kind === 'unauthorized') {
        await auth.onUnauthorized(userId);
        needsSignIn.add(userId);
        return received;
      }
      const validateStarted = clock.now();
      let page;
      try {
        // The whole page is checked before any of it is written.
        page = readPullResponse(answer.json, this.options.build);
      } catch (error) {
        if (!(error instanceof PullPageError)) throw error;
        throw new TransientSyncError(
          `The clinic server sent updates in a form this app does not know (${error.message}); it will try again`,
        );
      } finally {
        timings.validateMs += clock.now() - validateStarted;
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
        const repull = await beginFullRepull(db, page.reason, clock.now());
        status.update({ fullRepull: repull });
        continue;
      }
      if (page.more) {
        next = this.fetchPage(page.cursor, token);
        // Read (and its failure reported) on its turn; never an unhandled rejection meanwhile.
        next.catch(() => undefined);
      }
      const applied = await applyPullPage(db, page.records, page.cursor, {
        greatestStamp: page.greatestStamp,
        deviceId: this.options.deviceId,
        nowMs: clock.now(),
        chunkSize: this.options.chunkSize,
        freshDevice,
        yieldToUi: this.options.yieldToUi,
        newer: page.newer,
        now: () => clock.now(),
        onChunk: (stored) => {
          received += stored;
          status.update({ progress: { step: 'pull', done: received, total: null } });
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
      if (page.newer) {
        // Stored as they came; the person is told that an update is available.
        status.update({ newerRecords: await reviewNewerRecords(db, this.options.build) });
      }
      await this.noteFullRepull(page.records.length, page.more);
      if (!page.more) return received;
      await this.options.yieldToUi();
    }
  }

  /** A stored page counts towards a full re-pull under way; the last page ends it. */
  private async noteFullRepull(records: number, more: boolean): Promise<void> {
    const { db, clock, status } = this.options;
    if (status.getSnapshot().fullRepull?.finishedAt !== null) return;
    let repull = await noteFullRepullPage(db, records);
    if (!more) repull = await finishFullRepull(db, clock.now());
    status.update({ fullRepull: repull });
  }

  /** Asks for the page after `cursor`; a refusal other than 401 is thrown as the sync's failure. */
  private async fetchPage(cursor: number, token: string): Promise<PullAnswer> {
    const { transport } = this.options;
    const spent = { fetchMs: 0, parseMs: 0 };
    const response = await transport.request(
      `/api/sync/pull?after=${cursor}&limit=${this.options.pageLimit}`,
      { method: 'GET' },
      token,
      spent,
    );
    if (response.status === 401) return { kind: 'unauthorized' };
    if (!response.ok) throw await transport.failureOf(response, 'receive');
    const json = await transport.readJson(response, spent);
    return { kind: 'page', json, parseMs: spent.parseMs };
  }
}
