// The server's row of a synced record, as the sync and disputes modules read and write it.
import type { CollectionName, FieldWriteStamp, JsonValue } from '@fuselight/shared';

/**
 * The device of a write the server makes itself (a desk resolution, a countersignature, a
 * delivery state, the demo seed): stamps and candidates carry it where a tablet's id would be.
 */
export const SERVER_DEVICE = 'server';

/**
 * The select list of a StoredRecordRow from "sync_record" (version as text: it is a bigint).
 * Kept as literals (not built by a function) so the ORDER BY scan (sql-alias-order.spec.ts) sees
 * the text alias of "version" in every query they are spliced into.
 */
export const RECORD_COLUMNS = `"id", "collection", "site_id", "version"::text as "version", "deleted", "fields", "stamps", "created_at"`;

/**
 * The same select list with every column qualified by the alias `r` (`from "sync_record" r`): a
 * query that orders by version must name the bigint column `r."version"`, never the text alias.
 */
export const RECORD_COLUMNS_R = `r."id", r."collection", r."site_id", r."version"::text as "version", r."deleted", r."fields", r."stamps", r."created_at"`;

/** A field stamp as stored: the wire stamp plus when the server accepted the write. */
export interface StoredStamp extends FieldWriteStamp {
  /** ISO time the server accepted the write. */
  at: string;
}

export interface StoredRecord {
  id: string;
  collection: CollectionName;
  siteId: string;
  version: number;
  deleted: boolean;
  fields: Record<string, JsonValue>;
  /** One per field, and `deleted` once the record was deleted or restored. */
  stamps: Record<string, StoredStamp>;
  createdAt: string;
}

/** A conflict candidate as stored (the wire candidate plus its time). */
export interface StoredCandidate {
  value: JsonValue;
  hlc: string;
  by: string;
  device: string;
  version: number;
  at: string;
}

export interface StoredRecordRow {
  id: string;
  collection: CollectionName;
  site_id: string;
  version: string | number;
  deleted: boolean;
  fields: Record<string, JsonValue>;
  stamps: Record<string, StoredStamp>;
  created_at: Date | string;
}

export function recordFromRow(row: StoredRecordRow): StoredRecord {
  return {
    id: row.id,
    collection: row.collection,
    siteId: row.site_id,
    version: Number(row.version),
    deleted: row.deleted,
    fields: row.fields,
    stamps: row.stamps,
    createdAt: new Date(row.created_at).toISOString(),
  };
}

/** Stamps as the wire shows them (without the stored time). */
export function wireStamps(stamps: Record<string, StoredStamp>): Record<string, FieldWriteStamp> {
  const out: Record<string, FieldWriteStamp> = {};
  for (const [field, { hlc, version, by, device }] of Object.entries(stamps)) {
    out[field] = { hlc, version, by, device };
  }
  return out;
}
