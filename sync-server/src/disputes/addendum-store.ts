// The Addenda repository ("review_addendum"): a dispute resolved on a record of a Signed or
// Countersigned visit is recorded as an Addendum, written by the resolution in its own
// transaction (recordForResolution), read by the record history, and published for tablets as
// a synced `addendum` record (AddendumPublisher), which is noted on the row.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Injectable } from '@nestjs/common';
import type { JsonValue } from '@fuselight/shared';
import { jsonParam, sqlRows } from '../database/sql';

/** A row of "review_addendum". */
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

/** An Addendum not yet published, with its site. */
export type PendingAddendumRow = AddendumRow & { site_id: string };

/** The columns of an AddendumRow, of "review_addendum" aliased `a`. */
const ADDENDUM_COLUMNS = `a."id", a."conflict_id", a."visit_id", a."collection", a."record_id", a."field",
  a."visit_status", a."signed_value", a."previous_value", a."value", a."note", a."by_user"::text as "by_user",
  a."device", a."version"::text as "version", a."at"`;

/** A value no version reaches. */
const NO_VERSION_LIMIT = '9223372036854775807';

@Injectable()
export class AddendumStore {
  /**
   * Records the Addendum of a dispute just resolved in this transaction, when its record belongs
   * to a Signed or Countersigned visit (the record itself for a visit, its `visitId` otherwise):
   * the value the field held when the visit was last signed, the value just before the
   * resolution, the chosen value, the note and who resolved it. One statement; returns the
   * Addendum's id, or null when the visit is not Signed (or the dispute already has one).
   */
  async recordForResolution(em: EntityManager, disputeId: string): Promise<string | null> {
    const [row] = await sqlRows<{ id: string }>(
      em,
      `with "d" as (
         select c."id", c."collection", c."record_id", c."site_id", c."field", c."resolved_value", c."note",
                c."resolved_by", c."resolved_device", c."resolution_version", c."resolved_at",
                case when r."collection" = 'visit' then r."id"
                     when r."fields" ->> 'visitId' ~* '^[0-9a-f-]{36}$' then (r."fields" ->> 'visitId')::uuid
                end as "visit_id"
           from "sync_conflict" c join "sync_record" r on r."id" = c."record_id"
          where c."id" = ? and c."status" = 'resolved'
       ), "v" as (
         select "d".*, vr."fields" ->> 'status' as "visit_status",
                (select max(h."version") from "review_field_value" h
                  where h."record_id" = "d"."visit_id" and h."field" = 'status'
                    and h."value" = to_jsonb('signed'::text)) as "signed_version"
           from "d" join "sync_record" vr on vr."id" = "d"."visit_id" and vr."collection" = 'visit'
          where vr."fields" ->> 'status' in ('signed', 'countersigned')
       )
       insert into "review_addendum"
         ("id", "conflict_id", "visit_id", "collection", "record_id", "site_id", "field", "visit_status",
          "signed_value", "previous_value", "value", "note", "by_user", "device", "version", "at")
       select gen_random_uuid(), "v"."id", "v"."visit_id", "v"."collection", "v"."record_id", "v"."site_id",
              "v"."field", "v"."visit_status",
              (select h."value" from "review_field_value" h
                where h."record_id" = "v"."record_id" and h."field" = "v"."field"
                  and h."version" <= "v"."signed_version"
                order by h."version" desc limit 1),
              (select h."value" from "review_field_value" h
                where h."record_id" = "v"."record_id" and h."field" = "v"."field"
                  and h."version" < coalesce("v"."resolution_version", ${NO_VERSION_LIMIT})
                order by h."version" desc limit 1),
              "v"."resolved_value", "v"."note", "v"."resolved_by", "v"."resolved_device",
              "v"."resolution_version", coalesce("v"."resolved_at", now())
         from "v"
       on conflict ("conflict_id") do nothing
       returning "id"`,
      [disputeId],
    );
    return row?.id ?? null;
  }

  /** The Addenda of a record, or of every record of a visit, oldest first. */
  of(
    em: EntityManager,
    filter: { recordId: string } | { visitId: string },
  ): Promise<AddendumRow[]> {
    const [column, id] =
      'recordId' in filter ? ['record_id', filter.recordId] : ['visit_id', filter.visitId];
    return sqlRows<AddendumRow>(
      em,
      `select ${ADDENDUM_COLUMNS} from "review_addendum" a where a."${column}" = ? order by a."at", a."id"`,
      [id],
    );
  }

  /**
   * Locks the oldest unpublished Addendum (the given one only, when an id is given) that is not
   * among `skipped`, skipping rows another transaction holds; null when there is none.
   */
  async lockNextUnpublished(
    em: EntityManager,
    pick: { addendumId: string | null; skipped: readonly string[] },
  ): Promise<PendingAddendumRow | null> {
    const [row] = await sqlRows<PendingAddendumRow>(
      em,
      `select ${ADDENDUM_COLUMNS}, a."site_id"
         from "review_addendum" a
        where a."addendum_record_id" is null
          and (?::uuid is null or a."id" = ?::uuid)
          and not (a."id" = any (select jsonb_array_elements_text(?::jsonb)::uuid))
        order by a."at", a."id" limit 1 for update skip locked`,
      [pick.addendumId, pick.addendumId, jsonParam(pick.skipped)],
    );
    return row ?? null;
  }

  /** Notes the synced `addendum` record written for the Addendum. */
  async markPublished(em: EntityManager, addendumId: string, recordId: string): Promise<void> {
    await sqlRows(em, `update "review_addendum" set "addendum_record_id" = ? where "id" = ?`, [
      recordId,
      addendumId,
    ]);
  }
}
