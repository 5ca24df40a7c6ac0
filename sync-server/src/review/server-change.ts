// A change the server itself makes to a synced record (a countersignature, a return with a
// comment), written through the sync storage exactly as a push would leave it: the record row is
// locked, numbered with a version from the transaction-id watermark, and each written field is
// stamped by the supervisor (device `server` for a desk session), so it reaches every tablet on
// its next pull. An edit of a field whose dispute is open joins that dispute as a candidate
// (sync-protocol.md, merge rule 3). A record the server makes itself (an Addendum written when a
// dispute on a Signed visit is resolved) is created the same way. The sync module has no such
// method yet; these are built on its record store.
import type { EntityManager } from '@mikro-orm/postgresql';
import { BadRequestException, NotFoundException } from '@nestjs/common';
import {
  createClock,
  receive,
  tick,
  tryParseStamp,
  validateFields,
  validateRecord,
  type CollectionName,
  type JsonValue,
} from '@fuselight/shared';
import {
  appendCandidates,
  lockRecords,
  openConflictsOf,
  upsertRecords,
} from '../records/record-store';
import { BEGIN_VERSIONED_WRITE_SQL, VersionAllocator } from '../records/record-version';
import { sqlRows } from '../records/sql';
import type { StoredRecord, StoredStamp } from '../records/stored-record';
import { SERVER_DEVICE } from './review-store';

export interface ServerChange {
  recordId: string;
  fields: Record<string, JsonValue>;
  /** The supervisor making the change. */
  by: string;
  /** Their tablet, or null for a desk session (stamped `server`). */
  deviceId: string | null;
  now: Date;
  /** Checked on the locked row before anything is written. */
  check?: (record: StoredRecord) => void;
}

/** A stamp greater than every stamp on the record, from the server's own clock. */
export function serverStamp(record: StoredRecord, device: string, nowMs: number): string {
  let clock = createClock(device);
  for (const stamp of Object.values(record.stamps)) {
    if (tryParseStamp(stamp.hlc)) clock = receive(clock, stamp.hlc, nowMs);
  }
  return tick(clock, nowMs).stamp;
}

/** Applies the change inside the caller's transaction; returns the record as written. */
export async function applyServerChange(
  em: EntityManager,
  change: ServerChange,
): Promise<StoredRecord> {
  const [begin] = await sqlRows<{ base: string }>(em, BEGIN_VERSIONED_WRITE_SQL);
  const version = VersionAllocator.fromRow(begin).next();
  const record = (await lockRecords(em, [change.recordId])).get(change.recordId);
  if (!record) throw new NotFoundException(`No record has the id ${change.recordId}.`);
  change.check?.(record);
  const validation = validateFields(record.collection, change.fields);
  if (!validation.ok) {
    throw new BadRequestException(
      validation.errors.map((e) => `${e.field}: ${e.message}`).join('; '),
    );
  }
  const device = change.deviceId ?? SERVER_DEVICE;
  const at = change.now.toISOString();
  const hlc = serverStamp(record, device, change.now.getTime());
  const stamp: StoredStamp = { hlc, version, by: change.by, device, at };
  const fields = { ...record.fields, ...(validation.fields as Record<string, JsonValue>) };
  const stamps = { ...record.stamps };
  for (const field of Object.keys(validation.fields)) stamps[field] = stamp;
  const written: StoredRecord = { ...record, version, fields, stamps };
  await upsertRecords(em, [written], change.now);

  const open = await openConflictsOf(em, [record.id]);
  const joined = open
    .filter((conflict) => Object.hasOwn(validation.fields, conflict.field))
    .map((conflict) => ({
      conflictId: conflict.id,
      candidates: [
        { value: fields[conflict.field] ?? null, hlc, by: change.by, device, version, at },
      ],
    }));
  await appendCandidates(em, joined);
  return written;
}

export interface ServerRecordCreation {
  collection: CollectionName;
  recordId: string;
  siteId: string;
  fields: Record<string, JsonValue>;
  /** The person the record is written for (its author). */
  by: string;
  /** Their tablet, or null for a change made at the server (stamped `server`). */
  deviceId: string | null;
  now: Date;
}

/**
 * Creates a record inside the caller's transaction, as a push of a new record would leave it: a
 * full record checked by the shared schema, a version from the transaction-id watermark, and
 * every field stamped, so tablets pull it. Call it at most once per transaction (like
 * applyServerChange, it numbers its write as the transaction's first). A record that already
 * exists is left as it is and returned.
 */
export async function createServerRecord(
  em: EntityManager,
  creation: ServerRecordCreation,
): Promise<StoredRecord> {
  const [begin] = await sqlRows<{ base: string }>(em, BEGIN_VERSIONED_WRITE_SQL);
  const version = VersionAllocator.fromRow(begin).next();
  const existing = (await lockRecords(em, [creation.recordId])).get(creation.recordId);
  if (existing) return existing;
  const validation = validateRecord(creation.collection, creation.fields);
  if (!validation.ok) {
    throw new BadRequestException(
      validation.errors.map((e) => `${e.field}: ${e.message}`).join('; '),
    );
  }
  const fields = validation.fields as Record<string, JsonValue>;
  if (fields.siteId !== creation.siteId) {
    throw new BadRequestException(`siteId: the record must belong to site ${creation.siteId}`);
  }
  const device = creation.deviceId ?? SERVER_DEVICE;
  const nowMs = creation.now.getTime();
  const hlc = tick(createClock(device), nowMs).stamp;
  const stamp: StoredStamp = {
    hlc,
    version,
    by: creation.by,
    device,
    at: creation.now.toISOString(),
  };
  const stamps = Object.fromEntries(Object.keys(fields).map((field) => [field, stamp]));
  const written: StoredRecord = {
    id: creation.recordId,
    collection: creation.collection,
    siteId: creation.siteId,
    version,
    deleted: false,
    fields,
    stamps,
    createdAt: creation.now.toISOString(),
  };
  await upsertRecords(em, [written], creation.now);
  return written;
}
