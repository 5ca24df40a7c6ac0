// Reads of visits and their section records for the Review desk (countersigning, the Disputes
// detail): the statements on "sync_record" that follow a visit's links (`visitId`) or its
// signing state. Each method runs on the entity manager it is given, so it joins the caller's
// transaction.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Injectable } from '@nestjs/common';
import { jsonParam, sqlRows } from '../database/sql';
import {
  RECORD_COLUMNS,
  RECORD_COLUMNS_R,
  recordFromRow,
  type StoredRecord,
  type StoredRecordRow,
} from './stored-record';

/** Signed visits of the sites whose author's visits need countersigning (or flagged so). */
const AWAITING_COUNTERSIGN_FROM_WHERE = `from "sync_record" r
       left join "app_user" u
         on u."id"::text = coalesce(r."fields" ->> 'signedBy', r."fields" ->> 'clinicianId')
      where r."collection" = 'visit' and not r."deleted"
        and r."fields" ->> 'status' = 'signed'
        and r."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
        and (coalesce((r."fields" ->> 'needsCountersign')::boolean, false) or coalesce(u."needs_countersign", false))`;

@Injectable()
export class VisitRecords {
  /** The live section records of the given visits (any collection whose fields carry visitId). */
  async sectionsOf(em: EntityManager, visitIds: readonly string[]): Promise<StoredRecord[]> {
    if (visitIds.length === 0) return [];
    const rows = await sqlRows<StoredRecordRow>(
      em,
      `select ${RECORD_COLUMNS} from "sync_record"
        where not "deleted" and "collection" <> 'visit'
          and "fields" ->> 'visitId' in (select jsonb_array_elements_text(?::jsonb))
        order by "collection", "created_at", "id"`,
      [jsonParam([...new Set(visitIds)])],
    );
    return rows.map(recordFromRow);
  }

  /**
   * Visits signed by a clinician whose visits need countersigning (the visit's own flag, or the
   * author's setting), in the given sites, oldest signature first.
   */
  async awaitingCountersign(
    em: EntityManager,
    siteIds: readonly string[],
  ): Promise<StoredRecord[]> {
    if (siteIds.length === 0) return [];
    const rows = await sqlRows<StoredRecordRow>(
      em,
      `select ${RECORD_COLUMNS_R}
         ${AWAITING_COUNTERSIGN_FROM_WHERE}
        order by r."fields" ->> 'signedAt' nulls last, r."id"`,
      [jsonParam(siteIds)],
    );
    return rows.map(recordFromRow);
  }

  /** How many visits awaitingCountersign would list, counted in SQL. */
  async countAwaitingCountersign(em: EntityManager, siteIds: readonly string[]): Promise<number> {
    if (siteIds.length === 0) return 0;
    const [row] = await sqlRows<{ n: string }>(
      em,
      `select count(*)::text as "n" ${AWAITING_COUNTERSIGN_FROM_WHERE}`,
      [jsonParam(siteIds)],
    );
    return Number(row?.n ?? 0);
  }
}
