// Sending the Outbox: every pending entry in creation order, in batches of one author's
// consecutive entries under that author's session, each batch within the server's count and
// size limits. A record whose earlier entry cannot go now (its author must sign in again) holds
// back its later entries too, so the server always sees one record's changes in order. A batch
// the server refuses as a request (413, 400) is split until the change it cannot take is on its
// own; that change is then marked rejected with the server's words. What the answers do to the
// Outbox is data/outbox-transitions.ts.
import {
  PROTOCOL_VERSION,
  pushResponseSchema,
  type PushChange,
  type PushResponse,
  type PushResult,
} from '@fuselight/shared';
import type { FuselightDb, OutboxEntry } from '../data/db';
import { notifyDataChange } from '../data/data-events';
import { applyPushResults, claimForSending } from '../data/outbox-transitions';
import type { SyncAuth } from './sync-auth';
import type { SyncStatusStore } from './sync-status';
import type { SyncTimings } from './sync-timings';
import {
  TransientSyncError,
  messageOf,
  type SyncClock,
  type SyncTransport,
} from './sync-transport';

export interface OutboxPusherOptions {
  db: FuselightDb;
  auth: SyncAuth;
  transport: SyncTransport;
  status: SyncStatusStore;
  clock: SyncClock;
  schemaVersion: number;
  maxChanges: number;
  /** Body size a push stays under (the server refuses 5 MB). */
  maxPushBytes: number;
  onPushResult?: (entry: OutboxEntry, result: PushResult) => void;
}

type BatchOutcome = { kind: 'done'; accepted: number; rejected: number } | { kind: 'unauthorized' };

/** An Outbox entry as the server takes it. */
export function toChange(entry: OutboxEntry): PushChange {
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

export class OutboxPusher {
  constructor(private readonly options: OutboxPusherOptions) {}

  /**
   * Pushes every sendable entry in creation order, each batch under its author's session. An
   * author without a usable session is added to `needsSignIn`.
   */
  async push(
    needsSignIn: Set<string>,
    timings: SyncTimings,
  ): Promise<{ accepted: number; rejected: number }> {
    const { db, auth, clock, status } = this.options;
    const started = clock.now();
    const pending = await db.outbox.where('state').equals('pending').sortBy('seq');
    const total = pending.length;
    let done = 0;
    let accepted = 0;
    let rejected = 0;
    if (total === 0) return { accepted, rejected };
    status.update({ phase: 'pushing', progress: { step: 'push', done, total } });
    const tokens = new Map<string, string | null>();
    // A record whose earlier entry cannot go now holds back its later entries too, so the server
    // always sees one record's changes in the order they were made.
    const heldBack = new Set<string>();
    const queue = [...pending];
    const recordKeyOf = (entry: OutboxEntry) => `${entry.collection}/${entry.recordId}`;
    const tokenOf = async (authorId: string) => {
      if (!tokens.has(authorId)) tokens.set(authorId, await auth.tokenFor(authorId));
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
          (batch.length >= this.options.maxChanges || bytes + size > this.options.maxPushBytes)
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
      status.update({ progress: { step: 'push', done, total } });
    }
    timings.pushMs += clock.now() - started;
    return { accepted, rejected };
  }

  private async pushBatch(
    authorId: string,
    batch: OutboxEntry[],
    token: string | null,
    timings: SyncTimings,
  ): Promise<BatchOutcome> {
    if (token === null) return { kind: 'unauthorized' };
    const { db, transport, clock } = this.options;
    const claimed = await claimForSending(
      db,
      batch.map((entry) => entry.changeId),
    );
    if (claimed.length === 0) return { kind: 'done', accepted: 0, rejected: 0 };
    const body = JSON.stringify({
      protocol: PROTOCOL_VERSION,
      schemaVersion: this.options.schemaVersion,
      changes: claimed.map(toChange),
    });
    const response = await transport.request(
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
        db,
        claimed,
        [{ changeId: entry.changeId, status: 'rejected', error: reason }],
        clock.now(),
      );
      notifyDataChange({
        collections: [entry.collection],
        recordIds: [entry.recordId],
        outbox: true,
      });
      return { kind: 'done', accepted: 0, rejected: 1 };
    }
    if (!response.ok) throw await transport.failureOf(response, 'send');
    const json = await transport.readJson(response, timings);
    const parsed = pushResponseSchema.safeParse(json);
    if (!parsed.success) {
      throw new TransientSyncError(
        'The clinic server answered a push in a form this app does not know; it will try again',
      );
    }
    const answer: PushResponse = parsed.data;
    const { onPushResult } = this.options;
    if (onPushResult) {
      const sent = new Map(claimed.map((entry) => [entry.changeId, entry]));
      for (const result of answer.results) {
        const entry = sent.get(result.changeId);
        if (entry) onPushResult(entry, result);
      }
    }
    const summary = await applyPushResults(db, claimed, answer.results, clock.now());
    notifyDataChange({
      collections: summary.collections,
      recordIds: claimed.map((entry) => entry.recordId),
      outbox: true,
    });
    return { kind: 'done', accepted: summary.accepted, rejected: summary.rejected };
  }
}
