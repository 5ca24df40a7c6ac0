// The queries on synced records, conflicts and the change log that the push, pull, conflicts and
// pruning paths share. Every batch travels as one JSON parameter so a request of 500 changes is
// a handful of statements, not hundreds.
import type { EntityManager } from '@mikro-orm/postgresql';
import type { JsonValue } from '@fuselight/shared';
import { jsonParam, sqlRows } from './sql';
import {
  recordFromRow,
  type StoredCandidate,
  type StoredRecord,
  type StoredRecordRow,
  type StoredStamp,
} from './stored-record';

const RECORD_COLUMNS = `"id", "collection", "site_id", "version"::text as "version", "deleted", "fields", "stamps", "created_at"`;

/** Locks the records (in id order, so concurrent batches cannot deadlock) and reads them. */
export async function lockRecords(
  em: EntityManager,
  ids: readonly string[],
): Promise<Map<string, StoredRecord>> {
  const found = new Map<string, StoredRecord>();
  if (ids.length === 0) return found;
  const rows = await sqlRows<StoredRecordRow>(
    em,
    `select ${RECORD_COLUMNS} from "sync_record"
      where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
      order by "id" for update`,
    [jsonParam([...new Set(ids)].sort())],
  );
  for (const row of rows) found.set(row.id, recordFromRow(row));
  return found;
}

export interface OpenConflictRow {
  id: string;
  record_id: string;
  field: string;
}

export async function openConflictsOf(
  em: EntityManager,
  recordIds: readonly string[],
): Promise<OpenConflictRow[]> {
  if (recordIds.length === 0) return [];
  return sqlRows<OpenConflictRow>(
    em,
    `select "id", "record_id", "field" from "sync_conflict"
      where "status" = 'open' and "record_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
    [jsonParam([...new Set(recordIds)])],
  );
}

export interface RecordWrite {
  id: string;
  collection: string;
  siteId: string;
  version: number;
  deleted: boolean;
  fields: Record<string, JsonValue>;
  stamps: Record<string, StoredStamp>;
}

/**
 * Inserts or replaces the records' rows (their final state after the batch) in one statement, in
 * id order: two pushes creating the same new records (a
 * resent request) then wait on each other's first row instead of deadlocking.
 *
 * A change stamps every field it writes with the same stamp, so a record's stamps travel grouped:
 * each distinct stamp once, with the fields it stamps, and PostgreSQL spreads them back into the
 * field → stamp object the row stores. A batch of 500 new five-field records then sends about
 * 290 kB instead of 660 kB, and the statement takes about two thirds of the time (measured on
 * this 2-core machine over loopback TCP). Grouping is by object identity, so it never merges two
 * stamps that differ; stamps read back from a row are separate objects and simply travel alone.
 */
export async function upsertRecords(
  em: EntityManager,
  records: readonly RecordWrite[],
  at: Date,
): Promise<void> {
  if (records.length === 0) return;
  await sqlRows(
    em,
    `insert into "sync_record" ("id", "collection", "site_id", "version", "deleted", "fields", "stamps", "created_at", "updated_at")
     select x."id", x."collection", x."site_id", x."version", x."deleted", x."fields",
            coalesce((select jsonb_object_agg(f, g -> 0)
                        from jsonb_array_elements(x."stamp_groups") g, jsonb_array_elements_text(g -> 1) f),
                     '{}'::jsonb),
            ?::timestamptz, ?::timestamptz
       from jsonb_to_recordset(?::jsonb) as x("id" uuid, "collection" text, "site_id" uuid, "version" bigint, "deleted" boolean, "fields" jsonb, "stamp_groups" jsonb)
      order by x."id"
     on conflict ("id") do update set
       "site_id" = excluded."site_id", "version" = excluded."version", "deleted" = excluded."deleted",
       "fields" = excluded."fields", "stamps" = excluded."stamps", "updated_at" = excluded."updated_at"`,
    [
      at.toISOString(),
      at.toISOString(),
      jsonParam(
        records.map((r) => ({
          id: r.id,
          collection: r.collection,
          site_id: r.siteId,
          version: r.version,
          deleted: r.deleted,
          fields: r.fields,
          stamp_groups: stampGroups(r.stamps),
        })),
      ),
    ],
  );
}

/** [stamp, fields it stamps] for each distinct stamp object of a record. */
export function stampGroups(
  stamps: Readonly<Record<string, StoredStamp>>,
): [StoredStamp, string[]][] {
  const groups = new Map<StoredStamp, [StoredStamp, string[]]>();
  for (const [field, stamp] of Object.entries(stamps)) {
    const group = groups.get(stamp);
    if (group) group[1].push(field);
    else groups.set(stamp, [stamp, [field]]);
  }
  return [...groups.values()];
}

export interface ConflictInsert {
  id: string;
  collection: string;
  recordId: string;
  siteId: string;
  field: string;
  candidates: StoredCandidate[];
}

export async function insertConflicts(
  em: EntityManager,
  conflicts: readonly ConflictInsert[],
  at: Date,
): Promise<void> {
  if (conflicts.length === 0) return;
  await sqlRows(
    em,
    `insert into "sync_conflict" ("id", "collection", "record_id", "site_id", "field", "status", "opened_at", "candidates")
     select x."id", x."collection", x."record_id", x."site_id", x."field", 'open', ?::timestamptz, x."candidates"
       from jsonb_to_recordset(?::jsonb) as x("id" uuid, "collection" text, "record_id" uuid, "site_id" uuid, "field" text, "candidates" jsonb)`,
    [
      at.toISOString(),
      jsonParam(
        conflicts.map((c) => ({
          id: c.id,
          collection: c.collection,
          record_id: c.recordId,
          site_id: c.siteId,
          field: c.field,
          candidates: c.candidates,
        })),
      ),
    ],
  );
}

/** Adds candidates to open conflicts (a further edit joins the conflict). */
export async function appendCandidates(
  em: EntityManager,
  additions: readonly { conflictId: string; candidates: StoredCandidate[] }[],
): Promise<void> {
  if (additions.length === 0) return;
  await sqlRows(
    em,
    `update "sync_conflict" c set "candidates" = c."candidates" || x."candidates"
       from jsonb_to_recordset(?::jsonb) as x("id" uuid, "candidates" jsonb)
      where c."id" = x."id" and c."status" = 'open'`,
    [jsonParam(additions.map((a) => ({ id: a.conflictId, candidates: a.candidates })))],
  );
}
