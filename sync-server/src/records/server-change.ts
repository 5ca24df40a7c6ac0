// A change the server itself makes to a synced record from the Review desk (a countersignature,
// a return with a comment), and a record it makes itself (an Addendum written when a dispute on a
// Signed visit is resolved): the desk's checks of the input against the shared schema, then the
// records module's ServerWriter, which leaves the write as a push would (locked row, a version of
// the transaction-id watermark, fields stamped by the supervisor or device `server`, a write of a
// field whose dispute is open joining that dispute).
import type { EntityManager } from '@mikro-orm/postgresql';
import { BadRequestException, NotFoundException } from '@nestjs/common';
import {
  validateFields,
  validateRecord,
  type CollectionName,
  type JsonValue,
} from '@fuselight/shared';
import type { ServerWriter } from './server-writer';
import type { StoredRecord } from './stored-record';

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

function checked(result: ReturnType<typeof validateFields>): Record<string, JsonValue> {
  if (!result.ok) {
    throw new BadRequestException(result.errors.map((e) => `${e.field}: ${e.message}`).join('; '));
  }
  return result.fields as Record<string, JsonValue>;
}

/** Applies the change inside the caller's transaction; returns the record as written. */
export async function applyServerChange(
  writer: ServerWriter,
  em: EntityManager,
  change: ServerChange,
): Promise<StoredRecord> {
  const written = await writer.writeFields(em, {
    recordId: change.recordId,
    fields: (record) => checked(validateFields(record.collection, change.fields)),
    by: change.by,
    deviceId: change.deviceId,
    now: change.now,
    check: change.check,
  });
  if (!written) throw new NotFoundException(`No record has the id ${change.recordId}.`);
  return written.record;
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
 * every field stamped, so tablets pull it. A record that already exists is left as it is and
 * returned.
 */
export async function createServerRecord(
  writer: ServerWriter,
  em: EntityManager,
  creation: ServerRecordCreation,
): Promise<StoredRecord> {
  return writer.createRecord(em, {
    ...creation,
    validate: (fields) => {
      const valid = checked(validateRecord(creation.collection, fields));
      if (valid.siteId !== creation.siteId) {
        throw new BadRequestException(`siteId: the record must belong to site ${creation.siteId}`);
      }
      return valid;
    },
  });
}
