// The record store: every statement on synced records that the push, pull, disputes, Review
// desk, letters and mail paths share, and the push's statements on the disputes it opens or
// joins (the disputes module owns the rest of "sync_conflict", disputes/dispute-store.ts). It is
// a Nest provider of RecordsModule; each method runs on the entity manager it is given, so it
// joins the caller's transaction. Every batch travels as one JSON parameter so a request of 500
// changes is a handful of statements, not hundreds. Writes of the server's own field changes go
// through ServerWriter (server-writer.ts).
import type { EntityManager } from '@mikro-orm/postgresql';
import { Injectable } from '@nestjs/common';
import type { CollectionName } from '@fuselight/shared';
import { encodeRecordRows, type RecordWrite } from './record-row.codec';
import {
  BEGIN_VERSIONED_WRITE_SQL,
  SAFE_VERSION_BOUND_SQL,
  VersionAllocator,
} from './record-version';
import { jsonParam, sqlRows } from '../database/sql';
import {
  RECORD_COLUMNS,
  RECORD_COLUMNS_R,
  recordFromRow,
  type StoredCandidate,
  type StoredRecord,
  type StoredRecordRow,
} from './stored-record';

export type { RecordWrite } from './record-row.codec';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export interface OpenDisputeRow {
  id: string;
  record_id: string;
  field: string;
}

export interface DisputeInsert {
  id: string;
  collection: string;
  recordId: string;
  siteId: string;
  field: string;
  candidates: StoredCandidate[];
}

/** What a pull reads first (RecordStore.pullHead). */
export interface PullHead {
  horizon: number;
  epoch: number | null;
  deviceGeneration: number | null;
  generation: number;
  restoredThrough: number | null;
}

@Injectable()
export class RecordStore {
  /**
   * First statement of a writing transaction (record-version.ts): registers the writer, and
   * returns the transaction's version base; sets the statement timeout that bounds how long it
   * may hold pulls back.
   */
  async beginVersionedWrite(em: EntityManager): Promise<VersionAllocator> {
    const [begin] = await sqlRows<{ base: string }>(em, BEGIN_VERSIONED_WRITE_SQL);
    return VersionAllocator.fromRow(begin);
  }

  /**
   * The records of these ids that exist (ids that are not UUIDs are skipped), deleted or not: the
   * one read of records by id.
   */
  async byIds(em: EntityManager, ids: readonly string[]): Promise<Map<string, StoredRecord>> {
    const found = new Map<string, StoredRecord>();
    const wanted = [...new Set(ids.filter((id) => UUID.test(id)))];
    if (wanted.length === 0) return found;
    const rows = await sqlRows<StoredRecordRow>(
      em,
      `select ${RECORD_COLUMNS} from "sync_record" where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
      [jsonParam(wanted)],
    );
    for (const row of rows) found.set(row.id, recordFromRow(row));
    return found;
  }

  async byId(em: EntityManager, id: string): Promise<StoredRecord | null> {
    return (await this.byIds(em, [id])).get(id) ?? null;
  }

  /** A live (not deleted) record of the collection, or null. */
  async live(
    em: EntityManager,
    collection: CollectionName,
    id: string,
  ): Promise<StoredRecord | null> {
    const [row] = await sqlRows<StoredRecordRow>(
      em,
      `select ${RECORD_COLUMNS} from "sync_record" where "id" = ?::uuid and "collection" = ? and not "deleted"`,
      [id, collection],
    );
    return row ? recordFromRow(row) : null;
  }

  /** Live records of the collections whose `field` is one of `values`, in id order. */
  async liveWhere(
    em: EntityManager,
    collections: readonly CollectionName[],
    field: string,
    values: readonly string[],
  ): Promise<StoredRecord[]> {
    if (values.length === 0 || collections.length === 0) return [];
    const rows = await sqlRows<StoredRecordRow>(
      em,
      `select ${RECORD_COLUMNS} from "sync_record"
        where "collection" in (select jsonb_array_elements_text(?::jsonb))
          and "fields" ->> ? in (select jsonb_array_elements_text(?::jsonb))
          and not "deleted"
        order by "id"`,
      [jsonParam(collections), field, jsonParam(values)],
    );
    return rows.map(recordFromRow);
  }

  /**
   * Up to `limit` records of the collections (deleted or not) with versions after `after` and
   * below `bound`, in version order, optionally only those of `sites` and last written at or
   * after `since`: the FHIR bulk export's and hand-off's page (fhir/). Compared and ordered as
   * numbers on the bigint column.
   */
  async changedPage(
    em: EntityManager,
    page: {
      collections: readonly CollectionName[];
      after: number;
      bound: number | null;
      sites: readonly string[] | null;
      since: Date | null;
      limit: number;
    },
  ): Promise<StoredRecord[]> {
    if (page.collections.length === 0 || page.sites?.length === 0) return [];
    const rows = await sqlRows<StoredRecordRow>(
      em,
      `select ${RECORD_COLUMNS_R}
         from "sync_record" r
        where r."collection" in (select jsonb_array_elements_text(?::jsonb))
          and r."version" > ?
          and (?::bigint is null or r."version" < ?::bigint)
          and (?::jsonb is null or r."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid))
          and (?::timestamptz is null or r."updated_at" >= ?::timestamptz)
        order by r."version" limit ?`,
      [
        jsonParam(page.collections),
        page.after,
        page.bound,
        page.bound,
        page.sites ? jsonParam(page.sites) : null,
        page.sites ? jsonParam(page.sites) : null,
        page.since?.toISOString() ?? null,
        page.since?.toISOString() ?? null,
        page.limit,
      ],
    );
    return rows.map(recordFromRow);
  }

  /**
   * The bound below which versions are final for any snapshot taken after this returns
   * (record-version.ts). Its own statement, outside and before the pull's transaction.
   */
  async safeVersionBound(em: EntityManager): Promise<number> {
    const [row] = await sqlRows<{ bound: string }>(em, SAFE_VERSION_BOUND_SQL);
    if (!row) throw new Error('the safe version bound could not be read');
    return Number(row.bound);
  }

  /**
   * The first statement of a pull's snapshot: the tombstone horizon, the tablet's cursor epoch and
   * timeline generation (null for a desk session or an unknown device), and the server's
   * timeline (restores, see the migration RestoreTimeline).
   */
  async pullHead(em: EntityManager, deviceId: string | null): Promise<PullHead> {
    const [head] = await sqlRows<{
      horizon: string;
      epoch: number | null;
      device_generation: number | null;
      generation: number;
      restored_through: string | null;
    }>(
      em,
      `select (select "horizon_version" from "sync_horizon")::text as "horizon",
              d."pull_epoch" as "epoch", d."timeline_generation" as "device_generation",
              t."generation", t."restored_through"::text as "restored_through"
         from "sync_timeline" t left join "device" d on d."id" = ?::uuid`,
      [deviceId],
    );
    return {
      horizon: Number(head?.horizon ?? 0),
      epoch: head?.epoch ?? null,
      deviceGeneration: head?.device_generation ?? null,
      generation: head?.generation ?? 0,
      restoredThrough: head?.restored_through == null ? null : Number(head.restored_through),
    };
  }

  /**
   * Marks the tablet's cursor current: in this server's cursor epoch when it pulls from the start,
   * and in the server's timeline generation (it is at or below what a restore kept, or pulls from
   * the start). Outside the pull's read-only snapshot.
   */
  async markDeviceCursor(
    em: EntityManager,
    deviceId: string,
    mark: { epoch: number | null; generation: number },
  ): Promise<void> {
    await sqlRows(
      em,
      `update "device" set "pull_epoch" = greatest("pull_epoch", coalesce(?::int, "pull_epoch")),
              "timeline_generation" = greatest("timeline_generation", ?::int)
        where "id" = ?::uuid
          and ("pull_epoch" < coalesce(?::int, "pull_epoch") or "timeline_generation" < ?::int)`,
      [mark.epoch, mark.generation, deviceId, mark.epoch, mark.generation],
    );
  }

  /**
   * Up to `limit` records of the sites with versions after `after` and below `bound`, in version
   * order. Ordered and compared as numbers: "sync_record"."version" is the bigint column, never
   * the text alias of the select list.
   */
  async pullPage(
    em: EntityManager,
    page: { after: number; bound: number; sites: readonly string[]; limit: number },
  ): Promise<StoredRecord[]> {
    const rows = await sqlRows<StoredRecordRow>(
      em,
      `select ${RECORD_COLUMNS_R}
         from "sync_record" r
        where r."version" > ? and r."version" < ?
          and r."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
        order by r."version" limit ?`,
      [page.after, page.bound, jsonParam(page.sites), page.limit],
    );
    return rows.map(recordFromRow);
  }

  /** Whether a committed record of the sites after `after` waits at or beyond `bound`. */
  async heldBack(
    em: EntityManager,
    range: { after: number; bound: number; sites: readonly string[] },
  ): Promise<boolean> {
    const [row] = await sqlRows<{ held: boolean }>(
      em,
      `select exists (select 1 from "sync_record" where "version" >= ? and "version" > ?
         and "site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)) as "held"`,
      [range.bound, range.after, jsonParam(range.sites)],
    );
    return row?.held === true;
  }

  /** Locks the records (in id order, so concurrent batches cannot deadlock) and reads them. */
  async lockForUpdate(
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

  async openDisputesOf(em: EntityManager, recordIds: readonly string[]): Promise<OpenDisputeRow[]> {
    if (recordIds.length === 0) return [];
    return sqlRows<OpenDisputeRow>(
      em,
      `select "id", "record_id", "field" from "sync_conflict"
        where "status" = 'open' and "record_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
      [jsonParam([...new Set(recordIds)])],
    );
  }

  /**
   * Inserts or replaces the records' rows (their final state after the batch) in one statement,
   * in id order: two pushes creating the same new records (a resent request) then wait on each
   * other's first row instead of deadlocking. The rows travel encoded by record-row.codec.ts,
   * whose keys this statement reads.
   */
  async upsert(em: EntityManager, records: readonly RecordWrite[], at: Date): Promise<void> {
    if (records.length === 0) return;
    const { shared, rows } = encodeRecordRows(records);
    await sqlRows(
      em,
      `insert into "sync_record" ("id", "collection", "site_id", "version", "deleted", "fields", "stamps", "created_at", "updated_at")
     select x."id", coalesce(x."c", ?::text), coalesce(x."s", ?::uuid), x."v", coalesce(x."d", false), x."f",
            coalesce((select jsonb_object_agg(k, s."stamp")
                        from jsonb_array_elements(x."g") e
                        cross join lateral (
                          select case when jsonb_typeof(e -> 0) = 'string'
                                   then jsonb_build_object('hlc', e -> 0, 'version', coalesce((e ->> 2)::bigint, x."v"),
                                                           'by', ?::text, 'device', ?::text, 'at', ?::text)
                                   else e -> 0 end as "stamp"
                          offset 0) s,
                        jsonb_object_keys(case when jsonb_typeof(e -> 1) = 'null' then x."f" else e -> 1 end) k),
                     '{}'::jsonb),
            ?::timestamptz, ?::timestamptz
       from jsonb_to_recordset(?::jsonb) as x("id" uuid, "c" text, "s" uuid, "v" bigint, "d" boolean, "f" jsonb, "g" jsonb)
      order by x."id"
     on conflict ("id") do update set
       "site_id" = excluded."site_id", "version" = excluded."version", "deleted" = excluded."deleted",
       "fields" = excluded."fields", "stamps" = excluded."stamps", "updated_at" = excluded."updated_at"`,
      [
        shared.collection,
        shared.siteId,
        shared.stamp?.by ?? null,
        shared.stamp?.device ?? null,
        shared.stamp?.at ?? null,
        at.toISOString(),
        at.toISOString(),
        jsonParam(rows),
      ],
    );
  }

  async insertDisputes(
    em: EntityManager,
    disputes: readonly DisputeInsert[],
    at: Date,
  ): Promise<void> {
    if (disputes.length === 0) return;
    await sqlRows(
      em,
      `insert into "sync_conflict" ("id", "collection", "record_id", "site_id", "field", "status", "opened_at", "candidates")
     select x."id", x."collection", x."record_id", x."site_id", x."field", 'open', ?::timestamptz, x."candidates"
       from jsonb_to_recordset(?::jsonb) as x("id" uuid, "collection" text, "record_id" uuid, "site_id" uuid, "field" text, "candidates" jsonb)`,
      [
        at.toISOString(),
        jsonParam(
          disputes.map((c) => ({
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

  /** Adds candidates to open disputes (a further edit joins the dispute). */
  async appendCandidates(
    em: EntityManager,
    additions: readonly { disputeId: string; candidates: StoredCandidate[] }[],
  ): Promise<void> {
    if (additions.length === 0) return;
    await sqlRows(
      em,
      `update "sync_conflict" c set "candidates" = c."candidates" || x."candidates"
       from jsonb_to_recordset(?::jsonb) as x("id" uuid, "candidates" jsonb)
      where c."id" = x."id" and c."status" = 'open'`,
      [jsonParam(additions.map((a) => ({ id: a.disputeId, candidates: a.candidates })))],
    );
  }

  /**
   * Removes tombstones last written before `cutoff` and moves the horizon marker to the newest
   * version removed (sync/horizon.service.ts says why).
   */
  async pruneTombstones(
    em: EntityManager,
    cutoff: Date,
    now: Date,
  ): Promise<{ removed: number; horizonVersion: number }> {
    const [row] = await sqlRows<{ removed: string; horizon: string }>(
      em,
      `with "pruned" as (
         delete from "sync_record" where "deleted" and "updated_at" < ?::timestamptz returning "version"
       )
       update "sync_horizon" set
         "horizon_version" = greatest("horizon_version", coalesce((select max("version") from "pruned"), 0)),
         "pruned_at" = ?::timestamptz
       returning (select count(*) from "pruned")::text as "removed", "horizon_version"::text as "horizon"`,
      [cutoff.toISOString(), now.toISOString()],
    );
    return { removed: Number(row?.removed ?? 0), horizonVersion: Number(row?.horizon ?? 0) };
  }
}
