// The Review desk's reads on the sync storage (sync_record, sync_conflict) and on its own tables
// (review_field_value, review_addendum), plus the names of people, tablets and sites that make
// those rows readable. Raw SQL through the records module's helper, on the caller's transaction.
import type { EntityManager } from '@mikro-orm/postgresql';
import type { JsonValue } from '@fuselight/shared';
import { recordsByIds } from '../records/record-store';
import { jsonParam, sqlRows } from '../records/sql';
import {
  RECORD_COLUMNS,
  SERVER_DEVICE,
  RECORD_COLUMNS_R,
  recordFromRow,
  type StoredCandidate,
  type StoredRecord,
  type StoredRecordRow,
} from '../records/stored-record';
import type { DeviceRef, PersonRef } from '@fuselight/shared';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export { recordsByIds };

export async function recordById(em: EntityManager, id: string): Promise<StoredRecord | null> {
  return (await recordsByIds(em, [id])).get(id) ?? null;
}

/** The live section records of the given visits (any collection whose fields carry visitId). */
export async function sectionsOfVisits(
  em: EntityManager,
  visitIds: readonly string[],
): Promise<StoredRecord[]> {
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

/** Signed visits of the sites whose author's visits need countersigning (or flagged so). */
const AWAITING_COUNTERSIGN_FROM_WHERE = `from "sync_record" r
       left join "app_user" u
         on u."id"::text = coalesce(r."fields" ->> 'signedBy', r."fields" ->> 'clinicianId')
      where r."collection" = 'visit' and not r."deleted"
        and r."fields" ->> 'status' = 'signed'
        and r."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
        and (coalesce((r."fields" ->> 'needsCountersign')::boolean, false) or coalesce(u."needs_countersign", false))`;

/**
 * Visits signed by a clinician whose visits need countersigning (the visit's own flag, or the
 * author's setting), in the given sites, oldest signature first.
 */
export async function visitsAwaitingCountersign(
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

/** How many visits visitsAwaitingCountersign would list, counted in SQL. */
export async function countVisitsAwaitingCountersign(
  em: EntityManager,
  siteIds: readonly string[],
): Promise<number> {
  if (siteIds.length === 0) return 0;
  const [row] = await sqlRows<{ n: string }>(
    em,
    `select count(*)::text as "n" ${AWAITING_COUNTERSIGN_FROM_WHERE}`,
    [jsonParam(siteIds)],
  );
  return Number(row?.n ?? 0);
}

/** A row of sync_conflict, the table of disputes. */
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

const DISPUTE_COLUMNS = `"id", "collection", "record_id", "site_id", "field", "status", "opened_at", "candidates", "resolved_at", "resolved_by", "resolved_device", "resolved_value", "resolution_version"::text as "resolution_version", "note"`;

/** The disputes with the given ids (in no particular order; unknown ids are left out). */
export async function disputesByIds(
  em: EntityManager,
  ids: readonly string[],
): Promise<StoredDisputeRow[]> {
  const wanted = [...new Set(ids.filter((id) => UUID.test(id)))];
  if (wanted.length === 0) return [];
  return sqlRows<StoredDisputeRow>(
    em,
    `select ${DISPUTE_COLUMNS} from "sync_conflict"
      where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
    [jsonParam(wanted)],
  );
}

export async function disputeById(em: EntityManager, id: string): Promise<StoredDisputeRow | null> {
  if (!UUID.test(id)) return null;
  const [row] = await sqlRows<StoredDisputeRow>(
    em,
    `select ${DISPUTE_COLUMNS} from "sync_conflict" where "id" = ?`,
    [id],
  );
  return row ?? null;
}

export async function disputesOfRecord(
  em: EntityManager,
  recordId: string,
): Promise<StoredDisputeRow[]> {
  return sqlRows<StoredDisputeRow>(
    em,
    `select ${DISPUTE_COLUMNS} from "sync_conflict" where "record_id" = ? order by "opened_at", "id"`,
    [recordId],
  );
}

export async function openDisputeCounts(
  em: EntityManager,
  recordIds: readonly string[],
): Promise<Map<string, number>> {
  const counts = new Map<string, number>();
  if (recordIds.length === 0) return counts;
  const rows = await sqlRows<{ record_id: string; n: string }>(
    em,
    `select "record_id", count(*)::text as "n" from "sync_conflict"
      where "status" = 'open' and "record_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
      group by "record_id"`,
    [jsonParam([...new Set(recordIds)])],
  );
  for (const row of rows) counts.set(row.record_id, Number(row.n));
  return counts;
}

export interface FieldValueRow {
  field: string;
  value: JsonValue | null;
  hlc: string;
  version: string;
  by_user: string;
  device: string;
  at: Date | string;
}

export async function fieldValuesOf(em: EntityManager, recordId: string): Promise<FieldValueRow[]> {
  return sqlRows<FieldValueRow>(
    em,
    `select h."field", h."value", h."hlc", h."version"::text as "version", h."by_user", h."device", h."at"
       from "review_field_value" h where h."record_id" = ? order by h."version", h."field"`,
    [recordId],
  );
}

export interface AddendumRow {
  id: string;
  conflict_id: string;
  visit_id: string;
  collection: string;
  record_id: string;
  field: string;
  visit_status: string;
  signed_value: JsonValue | null;
  previous_value: JsonValue | null;
  value: JsonValue | null;
  note: string;
  by_user: string | null;
  device: string | null;
  version: string | null;
  at: Date | string;
}

export async function addendaOf(
  em: EntityManager,
  filter: { recordId: string } | { visitId: string },
): Promise<AddendumRow[]> {
  const [column, id] =
    'recordId' in filter ? ['record_id', filter.recordId] : ['visit_id', filter.visitId];
  return sqlRows<AddendumRow>(
    em,
    `select "id", "conflict_id", "visit_id", "collection", "record_id", "field", "visit_status", "signed_value",
            "previous_value", "value", "note", "by_user"::text as "by_user", "device", "version"::text as "version", "at"
       from "review_addendum" where "${column}" = ? order by "at", "id"`,
    [id],
  );
}

export interface SiteRow {
  id: string;
  name: string;
  time_zone: string;
}

export async function sitesByIds(
  em: EntityManager,
  ids: readonly string[],
): Promise<Map<string, SiteRow>> {
  const found = new Map<string, SiteRow>();
  const wanted = [...new Set(ids.filter((id) => UUID.test(id)))];
  if (wanted.length === 0) return found;
  const rows = await sqlRows<SiteRow>(
    em,
    `select "id", "name", "time_zone" from "site" where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
    [jsonParam(wanted)],
  );
  for (const row of rows) found.set(row.id, row);
  return found;
}

/** Names of people and labels of tablets, so a row reads "Ada Quill on Room 2 tablet". */
export class NameBook {
  private constructor(
    private readonly people: Map<string, string>,
    private readonly devices: Map<string, string>,
  ) {}

  static async load(
    em: EntityManager,
    userIds: Iterable<string>,
    deviceIds: Iterable<string>,
  ): Promise<NameBook> {
    const users = [...new Set([...userIds].filter((id) => UUID.test(id)))];
    const tablets = [...new Set([...deviceIds].filter((id) => UUID.test(id)))];
    const people = new Map<string, string>();
    const devices = new Map<string, string>();
    if (users.length > 0) {
      const rows = await sqlRows<{ id: string; name: string }>(
        em,
        `select "id", "name" from "app_user" where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
        [jsonParam(users)],
      );
      for (const row of rows) people.set(row.id, row.name);
    }
    if (tablets.length > 0) {
      const rows = await sqlRows<{ id: string; label: string }>(
        em,
        `select "id", "label" from "device" where "id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
        [jsonParam(tablets)],
      );
      for (const row of rows) devices.set(row.id, row.label);
    }
    return new NameBook(people, devices);
  }

  person(id: string): PersonRef {
    return { id, name: this.people.get(id) ?? `Unknown person (${id.slice(0, 8)})` };
  }

  device(id: string): DeviceRef {
    if (id === SERVER_DEVICE) return { id, label: 'the Review desk (server)' };
    return { id, label: this.devices.get(id) ?? `Unknown tablet (${id.slice(0, 8)})` };
  }
}

export function isoOf(value: Date | string): string {
  return new Date(value).toISOString();
}

/** The wall time of an HLC stamp as ISO, or null when the stamp is malformed. */
export function hlcWallIso(hlc: string): string | null {
  const match = /^(\d{15})-\d{5}-/.exec(hlc);
  if (!match) return null;
  const date = new Date(Number(match[1]));
  return Number.isNaN(date.getTime()) ? null : date.toISOString();
}

/** "Mira Tenby" from a patient record's fields. */
export function patientName(fields: Record<string, JsonValue> | undefined): string | null {
  if (!fields) return null;
  const parts = [fields.givenName, fields.familyName].filter(
    (p): p is string => typeof p === 'string' && p !== '',
  );
  return parts.length > 0 ? parts.join(' ') : null;
}
