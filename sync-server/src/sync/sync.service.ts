// Push and pull of sync protocol 1 (docs/sync-protocol.md).
//
// Push: one transaction per request. Changes already answered are replays (idempotency, see
// records/change-log.ts), the records are locked with SELECT … FOR UPDATE, every other change is planned
// in request order by the shared merge rule, and the plans are written in a few batched
// statements inside a savepoint, then their results logged and their audit events written in
// one more (records/change-log.ts). If PostgreSQL refuses a value (a data error), the batch is rolled
// back to that savepoint and the changes are written again one by one, each in its own
// savepoint, so only the offending change is rejected.
// Pull: one REPEATABLE READ read-only snapshot, bounded by the server's own open writes (the writer
// registry, records/record-version.ts); no one else's transaction holds it back.
import { EntityManager } from '@mikro-orm/postgresql';
import { IsolationLevel } from '@mikro-orm/core';
import {
  HttpException,
  HttpStatus,
  Inject,
  Injectable,
  Logger,
  PayloadTooLargeException,
} from '@nestjs/common';
import {
  MAX_CHANGES_PER_PUSH,
  SCHEMA_VERSION,
  pullQuerySchema,
  pushRequestShapeSchema,
  type JsonValue,
  type PullResponse,
  type PulledRecord,
  type PushResponse,
  type PushResult,
} from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { canReadClinical, sitesOf } from '../auth/scope';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { parseWith } from '../common/zod-validation.pipe';
import { ChangeTouch } from '../records/change-notice';
import { RecordStore, type PullHead } from '../records/record-store';
import { CURSOR_EPOCH, VersionAllocator } from '../records/record-version';
import { releaseSavepoint, rollbackToSavepoint, savepoint } from '../database/sql';
import { ChangeLog, type ChangeLogEntry } from '../records/change-log';
import { wireStamps } from '../records/stored-record';
import { PushPlanner, collapsePlans, type ChangePlan } from './push-planner';
import {
  PUSH_OBSERVER,
  emptyPushTimings,
  type PushObserver,
  type PushTimings,
} from './push-observer';

@Injectable()
export class SyncService {
  private readonly logger = new Logger('Sync');

  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(RecordStore) private readonly store: RecordStore,
    @Inject(ChangeLog) private readonly changeLog: ChangeLog,
    @Inject(PUSH_OBSERVER) private readonly observer: PushObserver,
  ) {}

  async push(user: AuthUser, body: unknown): Promise<PushResponse> {
    const timings = emptyPushTimings();
    const received = performance.now();
    const changes = parsePushEnvelope(body);
    const now = this.clock.now();
    const parsed = performance.now();
    timings.envelopeMs = parsed - received;
    let committing = 0;
    const results = await this.em.fork().transactional(async (em) => {
      timings.beginMs = performance.now() - parsed;
      const out = await this.pushInTransaction(em, user, changes, now, timings);
      committing = performance.now();
      return out;
    });
    timings.commitMs = performance.now() - committing;
    this.observer.pushed(timings);
    return { results, serverTime: now.toISOString() };
  }

  private async pushInTransaction(
    em: EntityManager,
    user: AuthUser,
    changes: readonly Record<string, unknown>[],
    now: Date,
    t: PushTimings,
  ): Promise<PushResult[]> {
    let mark = performance.now();
    const lap = (key: keyof PushTimings) => {
      const at = performance.now();
      t[key] += at - mark;
      mark = at;
    };

    const baseVersion = (await this.store.beginVersionedWrite(em)).base;
    const changeIds = [...new Set(changes.map((c) => c.changeId as string))];
    const claimant = { userId: user.userId, deviceId: user.deviceId };

    // Each attempt plans against what is committed now; an attempt whose results cannot all be
    // logged (a concurrent push answered one of its changes meanwhile) is undone and run again,
    // and then finds that answer among the earlier ones (records/change-log.ts).
    for (let attempt = 1; ; attempt += 1) {
      const earlier = await this.changeLog.firstResults(em, changeIds);
      lap('earlierMs');

      // The first occurrence of each id not answered before is planned; the rest are replays.
      const toPlan: { index: number; raw: Record<string, unknown> }[] = [];
      const planned = new Set<string>();
      changes.forEach((raw, index) => {
        const id = raw.changeId as string;
        if (!earlier.has(id) && !planned.has(id)) {
          planned.add(id);
          toPlan.push({ index, raw });
        }
      });
      const recordIds = PushPlanner.recordIdsOf(toPlan.map((c) => c.raw));
      const records = await this.store.lockForUpdate(em, recordIds);
      const open = await this.store.openDisputesOf(em, [...records.keys()]);
      lap('lockMs');

      const makePlanner = () =>
        new PushPlanner(user, now, new VersionAllocator(baseVersion), this.ids, records, open);
      const answered = new Map<string, ChangeLogEntry>();
      const touched = new ChangeTouch();
      const plans = planAll(makePlanner(), toPlan, answered);
      lap('planMs');

      // One savepoint per attempt: a batch the database refuses rolls back to it and is written
      // change by change; an attempt that cannot log all its results rolls back to it too.
      await savepoint(em, 'push_attempt');
      try {
        await this.writePlans(em, plans, now, touched);
      } catch (error) {
        if (!isDataError(error)) throw error;
        this.logger.warn(
          `push batch refused by the database (${describeDataError(error)}); writing change by change`,
        );
        await rollbackToSavepoint(em, 'push_attempt');
        answered.clear();
        await this.writeOneByOne(em, makePlanner(), toPlan, answered, now, touched);
      }
      lap('writeMs');

      const logged = await this.changeLog.storeResults(
        em,
        this.audit,
        [...answered.values()],
        claimant,
        now,
      );
      lap('logMs');
      // The savepoint is not released: the commit ends it with the transaction, one round trip
      // fewer per push.
      if (logged.size === answered.size) {
        // One notice per push, delivered on commit (docs/sync-protocol.md, "Live changes").
        await touched.announce(em);
        return resultsInRequestOrder(changes, earlier, answered);
      }
      await rollbackToSavepoint(em, 'push_attempt');
      if (attempt >= 3) {
        // A transient clash: a 5xx, which the tablet retries later with its Outbox intact.
        throw new HttpException(
          'These changes are being answered by another push at the same moment; try again shortly.',
          HttpStatus.SERVICE_UNAVAILABLE,
        );
      }
    }
  }
  private async writePlans(
    em: EntityManager,
    plans: readonly ChangePlan[],
    now: Date,
    touched: ChangeTouch,
  ): Promise<void> {
    const batch = collapsePlans(plans);
    touched.records(batch.records).disputes(batch.newDisputes.length + batch.joined.length);
    await this.store.upsert(em, batch.records, now);
    await this.store.insertDisputes(em, batch.newDisputes, now);
    await this.store.appendCandidates(em, batch.joined);
  }

  /** The slow path: each change in its own savepoint; a value the database refuses rejects only it. */
  private async writeOneByOne(
    em: EntityManager,
    planner: PushPlanner,
    toPlan: readonly { index: number; raw: Record<string, unknown> }[],
    answered: Map<string, ChangeLogEntry>,
    now: Date,
    touched: ChangeTouch,
  ): Promise<void> {
    for (const { index, raw } of toPlan) {
      const outcome = planner.plan(raw, index);
      const changeId = raw.changeId as string;
      if (outcome.kind === 'rejected') {
        answered.set(changeId, {
          result: { changeId, status: 'rejected', error: outcome.error },
          recordId: recordIdOf(raw),
        });
        continue;
      }
      await savepoint(em, 'push_change');
      try {
        await this.writePlans(em, [outcome.plan], now, touched);
        await releaseSavepoint(em, 'push_change');
        planner.commit(outcome.plan);
        answered.set(changeId, {
          result: outcome.plan.result,
          recordId: outcome.plan.record.id,
          audit: outcome.plan.audit,
        });
      } catch (error) {
        if (!isDataError(error)) throw error;
        await rollbackToSavepoint(em, 'push_change');
        answered.set(changeId, {
          result: {
            changeId,
            status: 'rejected',
            error: `changes.${index}: the server could not store this change (${describeDataError(error)}); correct the value and edit again.`,
          },
          recordId: recordIdOf(raw),
        });
      }
    }
  }

  async pull(user: AuthUser, query: unknown): Promise<PullResponse> {
    const { after, limit } = parseWith(pullQuerySchema, query, 'query');
    if (!canReadClinical(user)) return { records: [], cursor: after, more: false };
    const sites = sitesOf(user);
    // The bound is read before the snapshot is taken (records/record-version.ts).
    const bound = await this.store.safeVersionBound(this.em.fork());
    const answer = await this.em.fork().transactional(
      async (em): Promise<{ response: PullResponse; head: PullHead }> => {
        // The first statement fixes the snapshot; the rows come from the same one.
        const head = await this.store.pullHead(em, user.deviceId);
        const reset = cursorReset(after, head);
        if (reset) return { response: reset, head };
        const rows = await this.store.pullPage(em, { after, bound, sites, limit: limit + 1 });
        // A committed change at or beyond the bound (one of the server's own writes that began
        // earlier is still open) is not sent yet, but `more` tells the device to come back for it.
        const more =
          rows.length > limit || (await this.store.heldBack(em, { after, bound, sites }));
        const page = rows.slice(0, limit);
        const conflicts = await this.store.openDisputesOf(
          em,
          page.map((r) => r.id),
        );
        const openByRecord = new Map<string, string[]>();
        for (const c of conflicts)
          openByRecord.set(c.record_id, [...(openByRecord.get(c.record_id) ?? []), c.field]);
        const records: PulledRecord[] = page.map((r) => ({
          collection: r.collection,
          id: r.id,
          version: r.version,
          deleted: r.deleted,
          fields: r.fields as Record<string, JsonValue>,
          stamps: wireStamps(r.stamps),
          conflicts: (openByRecord.get(r.id) ?? []).sort(),
        }));
        const last = page.at(-1);
        return {
          response: { records, cursor: last ? last.version : after, more },
          head,
        };
      },
      { isolationLevel: IsolationLevel.REPEATABLE_READ, readOnly: true },
    );
    // A pull that was not told to start over puts the tablet's cursor in this server's epoch (when
    // from the start) and timeline (see cursorReset).
    if (user.deviceId !== null && !('reset' in answer.response)) {
      await this.store.markDeviceCursor(this.em.fork(), user.deviceId, {
        epoch: after === 0 ? CURSOR_EPOCH : null,
        generation: answer.head.generation,
      });
    }
    return answer.response;
  }
}

/**
 * Whether a tablet's cursor must start over: below the tombstone horizon (deletions it would
 * miss were pruned); handed out before CURSOR_EPOCH (pages ordered as text may have skipped
 * records); or above what a restore from a backup kept, before the tablet pulled since (it saw
 * changes the restored server lost, and new changes will reuse those versions).
 */
export function cursorReset(after: number, head: PullHead): PullResponse | null {
  if (after === 0) return null;
  if (after < head.horizon) return { reset: true, reason: 'horizon' };
  if (head.epoch !== null && head.epoch < CURSOR_EPOCH) {
    return { reset: true, reason: 'cursor-epoch' };
  }
  if (
    head.deviceGeneration !== null &&
    head.deviceGeneration < head.generation &&
    head.restoredThrough !== null &&
    after > head.restoredThrough
  ) {
    return { reset: true, reason: 'restored' };
  }
  return null;
}

/** One result per change of the request, in its order; a repeated id is a replay of its first. */
function resultsInRequestOrder(
  changes: readonly Record<string, unknown>[],
  earlier: ReadonlyMap<string, PushResult>,
  answered: ReadonlyMap<string, ChangeLogEntry>,
): PushResult[] {
  const seen = new Set<string>();
  return changes.map((raw): PushResult => {
    const id = raw.changeId as string;
    const first = earlier.get(id);
    if (first) return { ...first, replayed: true };
    const fresh = answered.get(id);
    if (!fresh) throw new Error(`change ${id} has no result`);
    // A later duplicate in the same request is a replay of the first occurrence.
    if (seen.has(id)) return { ...fresh.result, replayed: true };
    seen.add(id);
    return fresh.result;
  });
}

function planAll(
  planner: PushPlanner,
  toPlan: readonly { index: number; raw: Record<string, unknown> }[],
  answered: Map<string, ChangeLogEntry>,
): ChangePlan[] {
  const plans: ChangePlan[] = [];
  for (const { index, raw } of toPlan) {
    const changeId = raw.changeId as string;
    const outcome = planner.plan(raw, index);
    if (outcome.kind === 'rejected') {
      answered.set(changeId, {
        result: { changeId, status: 'rejected', error: outcome.error },
        recordId: recordIdOf(raw),
      });
      continue;
    }
    planner.commit(outcome.plan);
    plans.push(outcome.plan);
    answered.set(changeId, {
      result: outcome.plan.result,
      recordId: outcome.plan.record.id,
      audit: outcome.plan.audit,
    });
  }
  return plans;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

function recordIdOf(raw: Record<string, unknown>): string | null {
  return typeof raw.recordId === 'string' && UUID.test(raw.recordId) ? raw.recordId : null;
}

/** SQLSTATE class 22 (data exception): the database refused a value, not the request. */
function isDataError(error: unknown): boolean {
  const code = (error as { code?: unknown } | null)?.code;
  return typeof code === 'string' && code.startsWith('22');
}

function describeDataError(error: unknown): string {
  const code = (error as { code?: string }).code;
  if (code === '22P05' || code === '22021')
    return 'a text value holds a character the database cannot store, such as a NUL character';
  return `a value the database refused (SQLSTATE ${code ?? 'unknown'})`;
}

const UPGRADE_REQUIRED = 426;

/** 413, 400, 426 and 409 of the push envelope; returns the changes, each with a usable changeId. */
export function parsePushEnvelope(
  body: unknown,
  serverSchemaVersion: number = SCHEMA_VERSION,
): Record<string, unknown>[] {
  const changes = (body as { changes?: unknown } | null)?.changes;
  if (Array.isArray(changes) && changes.length > MAX_CHANGES_PER_PUSH) {
    throw new PayloadTooLargeException(
      `body.changes: ${changes.length} changes; a push carries at most ${MAX_CHANGES_PER_PUSH}, send the rest in another push.`,
    );
  }
  const request = parseWith(pushRequestShapeSchema, body, 'body');
  if (request.schemaVersion < serverSchemaVersion - 1) {
    throw new HttpException(
      {
        message: `This app runs record schema version ${request.schemaVersion}, which the server no longer accepts (it accepts ${serverSchemaVersion - 1} and ${serverSchemaVersion}). Update the app; your unsent changes stay on this tablet.`,
        schemaVersion: serverSchemaVersion,
      },
      UPGRADE_REQUIRED,
    );
  }
  if (request.schemaVersion > serverSchemaVersion) {
    throw new HttpException(
      {
        message: `This app runs record schema version ${request.schemaVersion}, newer than the server's ${serverSchemaVersion}. The server must be updated first; your unsent changes stay on this tablet.`,
        schemaVersion: serverSchemaVersion,
      },
      HttpStatus.CONFLICT,
    );
  }
  return request.changes as Record<string, unknown>[];
}
