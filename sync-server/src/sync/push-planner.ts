// Decides, change by change and in request order, what a push does to the records it has locked:
// validation (shape, values, scope, broken clock, the letter rules), then the shared merge rule
// (mergeChange), then the record's next state, the conflicts it opens or joins, its result and its
// audit line. It holds the working state of the batch in memory; the service writes the plans in a
// few statements.
import {
  TOMBSTONE_FIELD,
  isStampTooFarAhead,
  mergeChange,
  pushChangeFromJsonSchema,
  pushChangeSchema,
  validateFields,
  validateRecord,
  type AcceptedPushResult,
  type CollectionName,
  type FieldWriteStamp,
  type JsonValue,
  type PushChange,
  type ServerRecordState,
} from '@fuselight/shared';
import { canWriteClinical, hasSiteAccess } from '../auth/scope';
import type { AuthUser } from '../auth/auth-user';
import type { IdGenerator } from '../common/clock.provider';
import { describeZodError } from '../common/zod-validation.pipe';
import { visitPushProblem } from '../fhir/visit-push-rule';
import { letterPushProblem } from '../letters/letter-push-rule';
import type { VersionAllocator } from '../records/record-version';
import type { DisputeInsert, RecordWrite } from '../records/record-store';
import {
  SERVER_DEVICE,
  type StoredCandidate,
  type StoredRecord,
  type StoredStamp,
} from '../records/stored-record';
import type { ChangeAudit } from '../records/change-log';

export interface ChangePlan {
  result: AcceptedPushResult;
  record: StoredRecord;
  newDisputes: DisputeInsert[];
  /** Candidates joining conflicts that are already open (in the database or in this batch). */
  joined: { disputeId: string; candidate: StoredCandidate }[];
  /** Conflicts opened by this change, by field. */
  opened: Map<string, string>;
  /** Its audit event, written with its log row (records/change-log.ts). */
  audit: ChangeAudit;
}

export type PlanOutcome =
  { kind: 'accepted'; plan: ChangePlan } | { kind: 'rejected'; error: string };

export class PushPlanner {
  private readonly records: Map<string, StoredRecord>;
  /** Open conflicts: record id → field → conflict id. */
  private readonly openDisputes: Map<string, Map<string, string>>;

  constructor(
    private readonly user: AuthUser,
    private readonly now: Date,
    private readonly versions: VersionAllocator,
    private readonly ids: IdGenerator,
    records: ReadonlyMap<string, StoredRecord>,
    openDisputes: readonly { record_id: string; field: string; id: string }[],
  ) {
    this.records = new Map(records);
    this.openDisputes = new Map();
    for (const row of openDisputes) this.disputesOf(row.record_id).set(row.field, row.id);
  }

  /** The record ids a list of raw changes touches (only well-formed ones). */
  static recordIdsOf(changes: readonly unknown[]): string[] {
    const ids = new Set<string>();
    for (const change of changes) {
      const parsed = pushChangeSchema.shape.recordId.safeParse(
        (change as { recordId?: unknown }).recordId,
      );
      if (parsed.success) ids.add(parsed.data);
    }
    return [...ids];
  }

  private disputesOf(recordId: string): Map<string, string> {
    let fields = this.openDisputes.get(recordId);
    if (!fields) {
      fields = new Map();
      this.openDisputes.set(recordId, fields);
    }
    return fields;
  }

  /** Plans one change against the working state, without changing it (see `commit`). */
  plan(raw: unknown, index: number): PlanOutcome {
    const parsed = pushChangeFromJsonSchema.safeParse(raw);
    if (!parsed.success) return rejected(describeZodError(parsed.error, `changes.${index}`));
    const change = parsed.data;
    if (!canWriteClinical(this.user)) {
      return rejected(
        `The ${this.user.role} role does not change clinical records; sign in as a clinician to sync.`,
      );
    }
    if (isStampTooFarAhead(change.hlc, this.now.getTime())) {
      return rejected(
        `The change's stamp ${change.hlc.slice(0, 21)} is more than 24 hours ahead of the server's clock (${this.now.toISOString()}): set this tablet's date and time, then make the edit again.`,
      );
    }
    const record = this.records.get(change.recordId);
    if (record && record.collection !== change.collection) {
      return rejected(
        `Record ${change.recordId} is a ${record.collection} record, not a ${change.collection} record.`,
      );
    }
    const validation = record
      ? validateFields(change.collection, change.fields)
      : validateRecord(change.collection, change.fields);
    if (!validation.ok) {
      const problems = validation.errors.map((e) => `fields.${e.field}: ${e.message}`).join('; ');
      return rejected(`changes.${index}: ${problems}`);
    }
    const fields = validation.fields as Record<string, JsonValue>;
    const scopeProblem = this.scopeProblem(record, fields);
    if (scopeProblem) return rejected(scopeProblem);
    if (change.collection === 'letter') {
      const letterProblem = letterPushProblem(record, changedValues(record, fields), {
        deleting: change.deleted === true,
      });
      if (letterProblem) return rejected(`changes.${index}: ${letterProblem}`);
    }
    if (change.collection === 'visit') {
      const visitProblem = visitPushProblem(
        record && !record.deleted ? record.fields : null,
        changedValues(record, fields),
      );
      if (visitProblem) return rejected(`changes.${index}: ${visitProblem}`);
    }
    return { kind: 'accepted', plan: this.merge(record, change, fields) };
  }

  private scopeProblem(
    record: StoredRecord | undefined,
    fields: Record<string, JsonValue>,
  ): string | null {
    if (record && !hasSiteAccess(this.user, record.siteId)) {
      return `This record belongs to site ${record.siteId}, which is not one of the sites this session may use.`;
    }
    const target = typeof fields.siteId === 'string' ? fields.siteId : record?.siteId;
    if (target === undefined) return 'A new record needs its siteId.';
    if (!hasSiteAccess(this.user, target)) {
      return `Site ${target} is not one of the sites this session may use; a record can only be placed in your own sites.`;
    }
    return null;
  }

  private merge(
    record: StoredRecord | undefined,
    change: Omit<PushChange, 'fields'>,
    fields: Record<string, JsonValue>,
  ): ChangePlan {
    const open = record ? this.disputesOf(record.id) : new Map<string, string>();
    const state: ServerRecordState | null = record
      ? {
          version: record.version,
          deleted: record.deleted,
          fields: record.fields,
          stamps: record.stamps,
          openConflicts: [...open.keys()],
        }
      : null;
    const device = this.user.deviceId ?? SERVER_DEVICE;
    const merged = mergeChange(state, {
      baseVersion: change.baseVersion,
      hlc: change.hlc,
      by: this.user.userId,
      device,
      fields,
      ...(change.deleted === undefined ? {} : { deleted: change.deleted }),
    });

    const version = this.versions.next();
    const at = this.now.toISOString();
    const stamp: StoredStamp = { hlc: change.hlc, version, by: this.user.userId, device, at };
    const nextFields = { ...(record?.fields ?? {}) };
    const nextStamps = { ...(record?.stamps ?? {}) };
    for (const [field, value] of Object.entries(merged.writes)) {
      if (field !== TOMBSTONE_FIELD) nextFields[field] = value;
      nextStamps[field] = stamp;
    }
    const siteId = (nextFields.siteId as string | undefined) ?? record?.siteId ?? '';
    const next: StoredRecord = {
      id: change.recordId,
      collection: change.collection,
      siteId,
      version,
      deleted: merged.deleted,
      fields: nextFields,
      stamps: nextStamps,
      createdAt: record?.createdAt ?? at,
    };

    const incoming = (value: JsonValue): StoredCandidate => ({
      value,
      hlc: change.hlc,
      by: this.user.userId,
      device,
      version,
      at,
    });
    const newDisputes: DisputeInsert[] = [];
    const joined: ChangePlan['joined'] = [];
    const opened = new Map<string, string>();
    for (const outcome of merged.outcomes) {
      if (outcome.decision.conflict === 'none') continue;
      const disputeId = open.get(outcome.field);
      if (outcome.decision.conflict === 'joins' && disputeId !== undefined) {
        joined.push({ disputeId, candidate: incoming(outcome.incomingValue) });
        continue;
      }
      const id = this.ids.uuid();
      opened.set(outcome.field, id);
      const against = outcome.against;
      newDisputes.push({
        id,
        collection: change.collection,
        recordId: change.recordId,
        siteId,
        field: outcome.field,
        candidates: [
          ...(against ? [storedCandidate(against.value, against.stamp)] : []),
          incoming(outcome.incomingValue),
        ],
      });
    }

    return {
      result: {
        changeId: change.changeId,
        status: merged.status,
        version,
        conflicts: merged.conflicts,
      },
      record: next,
      newDisputes,
      joined,
      opened,
      audit: {
        id: this.ids.uuid(),
        kind: record
          ? merged.deleted && !record.deleted
            ? 'record.deleted'
            : 'record.changed'
          : 'record.created',
        siteId,
        collection: change.collection,
        fields: Object.keys(merged.writes),
      },
    };
  }

  /** Makes an accepted plan part of the working state, for the changes after it. */
  commit(plan: ChangePlan): void {
    this.records.set(plan.record.id, plan.record);
    const open = this.disputesOf(plan.record.id);
    for (const [field, id] of plan.opened) open.set(field, id);
  }

  collectionOf(recordId: string): CollectionName | undefined {
    return this.records.get(recordId)?.collection;
  }
}

/**
 * The fields of a change whose values differ from the stored record's. A final letter is judged
 * on what would change, as the database trigger judges it (a field sent again with the value it
 * already has changes nothing; a null where the field is absent adds a key, which does), so the
 * planner refuses in words what the trigger would refuse.
 */
function changedValues(
  record: StoredRecord | undefined,
  fields: Record<string, JsonValue>,
): Record<string, JsonValue> {
  if (!record || record.deleted) return fields;
  return Object.fromEntries(
    Object.entries(fields).filter(
      ([field, value]) =>
        !Object.hasOwn(record.fields, field) ||
        JSON.stringify(record.fields[field]) !== JSON.stringify(value),
    ),
  );
}

/**
 * A rejection names what the tablet sent, which may hold characters PostgreSQL cannot keep in a
 * JSON value (a NUL, a lone surrogate); the change log stores the words, so they are written in
 * a form it keeps — the same words the first answer and every replay give.
 */
function rejected(error: string): PlanOutcome {
  const kept = error.replace(LONE_SURROGATE, '\uFFFD').replaceAll('\u0000', '\\u0000');
  return { kind: 'rejected', error: kept };
}

const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g;

function storedCandidate(value: JsonValue, stamp: FieldWriteStamp): StoredCandidate {
  const at = (stamp as Partial<StoredStamp>).at ?? '';
  return { value, hlc: stamp.hlc, by: stamp.by, device: stamp.device, version: stamp.version, at };
}

/** The rows a batch of accepted plans writes: each record once (its last state), conflicts merged. */
export function collapsePlans(plans: readonly ChangePlan[]): {
  records: RecordWrite[];
  newDisputes: DisputeInsert[];
  joined: { disputeId: string; candidates: StoredCandidate[] }[];
} {
  const records = new Map<string, RecordWrite>();
  const inserts = new Map<string, DisputeInsert>();
  const joined = new Map<string, StoredCandidate[]>();
  for (const plan of plans) {
    records.set(plan.record.id, plan.record);
    for (const conflict of plan.newDisputes)
      inserts.set(conflict.id, { ...conflict, candidates: [...conflict.candidates] });
    for (const { disputeId, candidate } of plan.joined) {
      const created = inserts.get(disputeId);
      if (created) created.candidates.push(candidate);
      else joined.set(disputeId, [...(joined.get(disputeId) ?? []), candidate]);
    }
  }
  return {
    records: [...records.values()],
    newDisputes: [...inserts.values()],
    joined: [...joined].map(([disputeId, candidates]) => ({ disputeId, candidates })),
  };
}
