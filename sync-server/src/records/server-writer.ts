// The one way the server writes fields of a synced record itself: a desk resolution of a dispute,
// a countersignature or return, a letter's delivery state, an attachment's upload time, an
// Addendum record. Each write is left exactly as a push would leave it, so tablets get it on
// their next pull:
// - the record row is locked, and the write numbered with a version of the transaction-id
//   watermark (record-version.ts; one allocator per transaction, so several writes in one
//   transaction get distinct versions);
// - each written field is stamped by the person on whose behalf the server writes, on their
//   tablet or on the device `server` (SERVER_DEVICE), with an HLC past every stamp on the record
//   (and past any further stamps the caller names: the candidates of a dispute being resolved),
//   so the server's value is the latest write of the field;
// - the shared merge rule decides the field (the server has seen the record it locked, so its
//   write applies), and a write of a field whose dispute is open joins that dispute as one more
//   candidate (merge rule 3), except the dispute the write itself resolves.
// - a notice of the write's site is sent on commit (change-notice.ts), so tablets hear of it live.
// The caller checks its own input first and writes its own audit event in the same transaction.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import {
  TOMBSTONE_FIELD,
  createClock,
  mergeField,
  receive,
  tick,
  tryParseStamp,
  type CollectionName,
  type JsonValue,
} from '@fuselight/shared';
import { ChangeTouch } from './change-notice';
import { RecordStore } from './record-store';
import type { VersionAllocator } from './record-version';
import {
  SERVER_DEVICE,
  type StoredCandidate,
  type StoredRecord,
  type StoredStamp,
} from './stored-record';

export interface ServerFieldWrite {
  recordId: string;
  /**
   * Field → new value; `deleted` (the tombstone) takes true or false. A function computes them
   * from the locked row after `check` (to check them against the record's collection schema).
   */
  fields: Record<string, JsonValue> | ((record: StoredRecord) => Record<string, JsonValue>);
  /** The person the server writes for (a supervisor, the sender of a letter…). */
  by: string;
  /** Their tablet, or null for a write made at the server (stamped `server`). */
  deviceId: string | null;
  now: Date;
  /**
   * Checked on the locked row before anything is written: throw to refuse the write, return
   * false to leave the record as it is (the write then answers null).
   */
  check?: (record: StoredRecord) => boolean | void;
  /** Further HLC stamps the new one must pass (the candidates of a dispute being resolved). */
  after?: readonly string[];
  /** The id of the dispute this write resolves: the write does not join it. */
  resolving?: string;
}

export interface ServerFieldWritten {
  /** The record as it was before the write. */
  before: StoredRecord;
  /** The record as written. */
  record: StoredRecord;
  version: number;
  stamp: StoredStamp;
  /** Ids of the open disputes the write joined as a candidate. */
  joined: string[];
}

export interface ServerRecordCreation {
  collection: CollectionName;
  recordId: string;
  siteId: string;
  /** The full record. */
  fields: Record<string, JsonValue>;
  /**
   * Checks the fields against the collection's schema when the record is to be created (not
   * when it already exists) and returns them as stored; throw to refuse.
   */
  validate?: (fields: Record<string, JsonValue>) => Record<string, JsonValue>;
  /** The person the record is written for (its author). */
  by: string;
  /** Their tablet, or null for a record made at the server (stamped `server`). */
  deviceId: string | null;
  now: Date;
}

/** An HLC stamp greater than every stamp on the record (and `after`), from the server's clock. */
export function serverStamp(
  record: Pick<StoredRecord, 'stamps'>,
  device: string,
  nowMs: number,
  after: readonly string[] = [],
): string {
  let clock = createClock(device);
  for (const hlc of [...Object.values(record.stamps).map((stamp) => stamp.hlc), ...after]) {
    if (tryParseStamp(hlc)) clock = receive(clock, hlc, nowMs);
  }
  return tick(clock, nowMs).stamp;
}

@Injectable()
export class ServerWriter {
  /** The version allocator of each open transaction (keyed by its transaction object). */
  private readonly allocators = new WeakMap<object, VersionAllocator>();

  constructor(@Inject(RecordStore) private readonly store: RecordStore) {}

  /**
   * Starts the transaction's versioned write (its first statement, where the caller can make it
   * so: it also sets the statement timeout) and returns its version allocator; later calls in the
   * same transaction return the same allocator.
   */
  async begin(em: EntityManager): Promise<VersionAllocator> {
    const transaction = em.getTransactionContext<object>();
    if (!transaction) throw new Error('the server writes records only inside a transaction');
    let versions = this.allocators.get(transaction);
    if (!versions) {
      versions = await this.store.beginVersionedWrite(em);
      this.allocators.set(transaction, versions);
    }
    return versions;
  }

  /** Writes fields of one record in the caller's transaction; null when the record is not there. */
  async writeFields(
    em: EntityManager,
    write: ServerFieldWrite,
  ): Promise<ServerFieldWritten | null> {
    const versions = await this.begin(em);
    const before = (await this.store.lockForUpdate(em, [write.recordId])).get(write.recordId);
    if (!before || write.check?.(before) === false) return null;
    const written = typeof write.fields === 'function' ? write.fields(before) : write.fields;
    const device = write.deviceId ?? SERVER_DEVICE;
    const hlc = serverStamp(before, device, write.now.getTime(), write.after);
    const version = versions.next();
    const at = write.now.toISOString();
    const stamp: StoredStamp = { hlc, version, by: write.by, device, at };

    const openFields = new Map<string, string[]>();
    for (const conflict of await this.store.openDisputesOf(em, [before.id])) {
      if (conflict.id === write.resolving) continue;
      openFields.set(conflict.field, [...(openFields.get(conflict.field) ?? []), conflict.id]);
    }
    const fields = { ...before.fields };
    const stamps = { ...before.stamps };
    let deleted = before.deleted;
    const joins: { disputeId: string; candidates: StoredCandidate[] }[] = [];
    for (const [field, value] of Object.entries(written)) {
      if (value === undefined) continue;
      const tombstone = field === TOMBSTONE_FIELD;
      const current = stamps[field];
      const decision = mergeField(
        current && {
          value: (tombstone ? deleted : fields[field]) ?? null,
          stamp: current,
          conflictOpen: openFields.has(field),
        },
        { value, hlc, by: write.by, device, baseVersion: before.version },
      );
      // The server writes on the record it holds locked, so the rule always applies its value.
      if (decision.kind !== 'apply') throw new Error(`server write of ${field} was not applied`);
      if (tombstone) deleted = value === true;
      else fields[field] = value;
      stamps[field] = stamp;
      if (decision.conflict === 'joins') {
        for (const disputeId of openFields.get(field) ?? []) {
          joins.push({
            disputeId,
            candidates: [{ value, hlc, by: write.by, device, version, at }],
          });
        }
      }
    }
    const record: StoredRecord = { ...before, version, deleted, fields, stamps };
    await this.store.upsert(em, [record], write.now);
    await this.store.appendCandidates(em, joins);
    await new ChangeTouch()
      .records([record])
      .disputes(joins.length + (write.resolving ? 1 : 0))
      .announce(em);
    return { before, record, version, stamp, joined: joins.map((join) => join.disputeId) };
  }

  /**
   * Creates a record in the caller's transaction, as a push of a new record would leave it: every
   * field stamped, a version of the watermark. A record that already exists is left as it is and
   * returned.
   */
  async createRecord(em: EntityManager, creation: ServerRecordCreation): Promise<StoredRecord> {
    const versions = await this.begin(em);
    const existing = (await this.store.lockForUpdate(em, [creation.recordId])).get(
      creation.recordId,
    );
    if (existing) return existing;
    const fields = creation.validate ? creation.validate(creation.fields) : creation.fields;
    const device = creation.deviceId ?? SERVER_DEVICE;
    const stamp: StoredStamp = {
      hlc: tick(createClock(device), creation.now.getTime()).stamp,
      version: versions.next(),
      by: creation.by,
      device,
      at: creation.now.toISOString(),
    };
    const written: StoredRecord = {
      id: creation.recordId,
      collection: creation.collection,
      siteId: creation.siteId,
      version: stamp.version,
      deleted: false,
      fields,
      stamps: Object.fromEntries(Object.keys(fields).map((field) => [field, stamp])),
      createdAt: creation.now.toISOString(),
    };
    await this.store.upsert(em, [written], creation.now);
    await new ChangeTouch().records([written]).announce(em);
    return written;
  }
}
