// The disputes repository: every statement on "sync_conflict" outside the push path (the list of
// GET /api/conflicts, the Review desk's list, counts and detail, the record history's and the
// countersign check's reads, and the resolution). The push path's statements that open disputes
// and add candidates to them live with the records they lock (records/record-store.ts). Each
// method runs on the entity manager it is given, so it joins the caller's transaction.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Injectable } from '@nestjs/common';
import { TOMBSTONE_FIELD, type DisputeQuery, type JsonValue } from '@fuselight/shared';
import { jsonParam, sqlRows } from '../database/sql';
import type { StoredCandidate } from '../records/stored-record';
import {
  countOpenDisputes,
  pageOfOpenDisputes,
  tallyOpenDisputes,
  type DisputeIdPage,
  type DisputeScope,
  type OpenDisputeTally,
} from './dispute-list-store';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** A row of "sync_conflict", the table of disputes. */
export interface StoredDisputeRow {
  id: string;
  collection: string;
  record_id: string;
  site_id: string;
  field: string;
  status: 'open' | 'resolved';
  opened_at: Date | string;
  candidates: StoredCandidate[];
  resolved_at: Date | string | null;
  resolved_by: string | null;
  resolved_device: string | null;
  resolved_value: JsonValue | null;
  resolution_version: string | null;
  note: string | null;
}

/** A dispute with the value its field holds on the record now (null when the record is gone). */
export type DisputeWithProvisional = StoredDisputeRow & { provisional: JsonValue | null };

/** The columns of a StoredDisputeRow, of "sync_conflict" aliased `c`. */
const DISPUTE_COLUMNS = `c."id", c."collection", c."record_id", c."site_id", c."field", c."status", c."opened_at",
  c."candidates", c."resolved_at", c."resolved_by", c."resolved_device", c."resolved_value",
  c."resolution_version"::text as "resolution_version", c."note"`;

/** The field's current value on the record (aliased `r`), the tombstone read from "deleted". */
const PROVISIONAL_COLUMN = `case when c."field" = '${TOMBSTONE_FIELD}' then to_jsonb(r."deleted") else r."fields" -> c."field" end as "provisional"`;

/** How a supervisor's resolution closes a dispute. */
export interface DisputeResolution {
  disputeId: string;
  at: Date;
  by: string;
  device: string;
  value: JsonValue;
  version: number;
  note: string | null;
}

@Injectable()
export class DisputeStore {
  /** The disputes with the given ids (in no particular order; unknown ids are left out). */
  async byIds(em: EntityManager, ids: readonly string[]): Promise<StoredDisputeRow[]> {
    const wanted = [...new Set(ids.filter((id) => UUID.test(id)))];
    if (wanted.length === 0) return [];
    return sqlRows<StoredDisputeRow>(
      em,
      `select ${DISPUTE_COLUMNS} from "sync_conflict" c
        where c."id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
      [jsonParam(wanted)],
    );
  }

  async byId(em: EntityManager, id: string): Promise<StoredDisputeRow | null> {
    if (!UUID.test(id)) return null;
    const [row] = await sqlRows<StoredDisputeRow>(
      em,
      `select ${DISPUTE_COLUMNS} from "sync_conflict" c where c."id" = ?`,
      [id],
    );
    return row ?? null;
  }

  /** Every dispute of the record, open or resolved, oldest first. */
  ofRecord(em: EntityManager, recordId: string): Promise<StoredDisputeRow[]> {
    return sqlRows<StoredDisputeRow>(
      em,
      `select ${DISPUTE_COLUMNS} from "sync_conflict" c
        where c."record_id" = ? order by c."opened_at", c."id"`,
      [recordId],
    );
  }

  /** How many open disputes each of the records has (records without any are left out). */
  async openCountsByRecord(
    em: EntityManager,
    recordIds: readonly string[],
  ): Promise<Map<string, number>> {
    const counts = new Map<string, number>();
    if (recordIds.length === 0) return counts;
    const rows = await sqlRows<{ record_id: string; n: string }>(
      em,
      `select c."record_id", count(*)::text as "n" from "sync_conflict" c
        where c."status" = 'open' and c."record_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
        group by c."record_id"`,
      [jsonParam([...new Set(recordIds)])],
    );
    for (const row of rows) counts.set(row.record_id, Number(row.n));
    return counts;
  }

  /**
   * A page of the disputes of the sites in id order (which is opening order), after `after`,
   * optionally of one status or one record, each with its field's current value: the list of
   * GET /api/conflicts. Returns up to `limit` rows.
   */
  pageWithProvisional(
    em: EntityManager,
    page: {
      siteIds: readonly string[];
      status: 'open' | 'resolved' | null;
      recordId: string | null;
      after: string | null;
      limit: number;
    },
  ): Promise<DisputeWithProvisional[]> {
    return sqlRows<DisputeWithProvisional>(
      em,
      `select ${DISPUTE_COLUMNS}, ${PROVISIONAL_COLUMN}
         from "sync_conflict" c join "sync_record" r on r."id" = c."record_id"
        where c."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
          and (?::text is null or c."status" = ?::text)
          and (?::uuid is null or c."record_id" = ?::uuid)
          and (?::uuid is null or c."id" > ?::uuid)
        order by c."id" limit ?`,
      [
        jsonParam(page.siteIds),
        page.status,
        page.status,
        page.recordId,
        page.recordId,
        page.after,
        page.after,
        page.limit,
      ],
    );
  }

  /** The id of the record the dispute is about, without locking anything; null if unknown. */
  async recordIdOf(em: EntityManager, disputeId: string): Promise<string | null> {
    const [row] = await sqlRows<{ record_id: string }>(
      em,
      `select c."record_id" from "sync_conflict" c where c."id" = ?`,
      [disputeId],
    );
    return row?.record_id ?? null;
  }

  /**
   * Locks the dispute for its resolution and reads it with its field's current value. Lock its
   * record first (RecordStore.lockForUpdate): the same order as a push.
   */
  async lockForResolution(
    em: EntityManager,
    disputeId: string,
  ): Promise<DisputeWithProvisional | null> {
    const [row] = await sqlRows<DisputeWithProvisional>(
      em,
      `select ${DISPUTE_COLUMNS}, ${PROVISIONAL_COLUMN}
         from "sync_conflict" c join "sync_record" r on r."id" = c."record_id"
        where c."id" = ? for update of c`,
      [disputeId],
    );
    return row ?? null;
  }

  /** Closes a dispute with the value a supervisor chose (written by ServerWriter first). */
  async markResolved(em: EntityManager, resolution: DisputeResolution): Promise<void> {
    await sqlRows(
      em,
      `update "sync_conflict" set "status" = 'resolved', "resolved_at" = ?::timestamptz, "resolved_by" = ?::uuid,
              "resolved_device" = ?, "resolved_value" = ?::jsonb, "resolution_version" = ?, "note" = ?
        where "id" = ? and "status" = 'open'`,
      [
        resolution.at.toISOString(),
        resolution.by,
        resolution.device,
        JSON.stringify(resolution.value),
        resolution.version,
        resolution.note,
        resolution.disputeId,
      ],
    );
  }

  /** The number of open disputes in the sites. */
  countOpen(em: EntityManager, siteIds: readonly string[]): Promise<number> {
    return countOpenDisputes(em, siteIds);
  }

  /** Counts the open disputes of the sites, and which sites and sections they are in. */
  tallyOpen(em: EntityManager, siteIds: readonly string[]): Promise<OpenDisputeTally> {
    return tallyOpenDisputes(em, siteIds);
  }

  /** One page of the Review desk's filtered, sorted list (ids only) and the matching count. */
  pageOfOpen(em: EntityManager, query: DisputeQuery, scope: DisputeScope): Promise<DisputeIdPage> {
    return pageOfOpenDisputes(em, query, scope);
  }
}
