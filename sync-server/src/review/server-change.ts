// A change the server itself makes to a synced record (a countersignature, a return with a
// comment), written through the sync storage exactly as a push would leave it: the record row is
// locked, numbered with a version from the transaction-id watermark, and each written field is
// stamped by the supervisor (device `server` for a desk session), so it reaches every tablet on
// its next pull. An edit of a field whose dispute is open joins that dispute as a candidate
// (sync-protocol.md, merge rule 3). The sync module has no such method yet; this one is built on
// its record store.
import type { EntityManager } from '@mikro-orm/postgresql';
import { BadRequestException, NotFoundException } from '@nestjs/common';
import {
  createClock,
  receive,
  tick,
  tryParseStamp,
  validateFields,
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
