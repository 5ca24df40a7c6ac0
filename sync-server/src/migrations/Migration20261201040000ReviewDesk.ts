import { Migration } from '@mikro-orm/migrations';

/**
 * The Review desk's own tables, on top of the sync storage (sync_record, sync_conflict):
 *
 * - `review_field_value`: every value a field has held, with its stamp (HLC, version, author,
 *   tablet, time). sync_record keeps only the current value, so a trigger copies each newly
 *   stamped field whenever a record row is written, by any path (push, resolution, countersign),
 *   inside the writing transaction. Existing rows are copied once here.
 * - `review_addendum`: a dispute resolved on a record of a Signed or Countersigned visit. A
 *   trigger on sync_conflict writes it in the resolving transaction, whichever code resolves the
 *   dispute, and refuses a resolution without a note there; the signed value stays readable.
 */
export class Migration20261201040000ReviewDesk extends Migration {
  override async up(): Promise<void> {
    this.addSql(`
      create table "review_field_value" (
        "record_id" uuid not null,
        "collection" text not null,
        "site_id" uuid not null,
        "field" text not null,
        "value" jsonb null,
        "hlc" text not null,
        "version" bigint not null,
        "by_user" text not null,
        "device" text not null,
        "at" timestamptz not null,
        primary key ("record_id", "field", "version")
      );`);
    this.addSql(
      `create index "review_field_value_record_idx" on "review_field_value" ("record_id", "version");`,
    );

    this.addSql(`
      create function "review_capture_field_values"() returns trigger language plpgsql as $$
      begin
        insert into "review_field_value"
          ("record_id", "collection", "site_id", "field", "value", "hlc", "version", "by_user", "device", "at")
        select new."id", new."collection", new."site_id", s.key,
               case when s.key = 'deleted' then to_jsonb(new."deleted") else new."fields" -> s.key end,
               s.value ->> 'hlc', (s.value ->> 'version')::bigint, s.value ->> 'by', s.value ->> 'device',
               coalesce((s.value ->> 'at')::timestamptz, now())
          from jsonb_each(new."stamps") s
         where tg_op = 'INSERT' or (old."stamps" -> s.key) is distinct from s.value
        on conflict do nothing;
        return new;
      end $$;`);
    this.addSql(`
      create trigger "review_capture_field_values"
        after insert or update of "stamps" on "sync_record"
        for each row execute function "review_capture_field_values"();`);
    this.addSql(`
      insert into "review_field_value"
        ("record_id", "collection", "site_id", "field", "value", "hlc", "version", "by_user", "device", "at")
      select r."id", r."collection", r."site_id", s.key,
             case when s.key = 'deleted' then to_jsonb(r."deleted") else r."fields" -> s.key end,
             s.value ->> 'hlc', (s.value ->> 'version')::bigint, s.value ->> 'by', s.value ->> 'device',
             coalesce((s.value ->> 'at')::timestamptz, r."updated_at")
        from "sync_record" r, jsonb_each(r."stamps") s
      on conflict do nothing;`);

    this.addSql(`
      create table "review_addendum" (
        "id" uuid primary key,
        "conflict_id" uuid not null unique references "sync_conflict" ("id") on delete cascade,
        "visit_id" uuid not null,
        "collection" text not null,
        "record_id" uuid not null,
        "site_id" uuid not null,
        "field" text not null,
        "visit_status" text not null,
        "signed_value" jsonb null,
        "previous_value" jsonb null,
        "value" jsonb null,
        "note" text not null,
        "by_user" uuid null,
        "device" text null,
        "version" bigint null,
        "at" timestamptz not null
      );`);
    this.addSql(
      `create index "review_addendum_visit_idx" on "review_addendum" ("visit_id", "at");`,
    );
    this.addSql(
      `create index "review_addendum_record_idx" on "review_addendum" ("record_id", "at");`,
    );

    // The visit a record belongs to: itself for a visit, fields.visitId for a section.
    this.addSql(`
      create function "review_record_visit"(p_record_id uuid) returns uuid language sql stable as $$
        select case when r."collection" = 'visit' then r."id"
                    when r."fields" ->> 'visitId' ~* '^[0-9a-f-]{36}$' then (r."fields" ->> 'visitId')::uuid
                    else null end
          from "sync_record" r where r."id" = p_record_id
      $$;`);

    this.addSql(`
      create function "review_addendum_on_resolve"() returns trigger language plpgsql as $$
      declare
        v_visit_id uuid;
        v_status text;
        v_signed_version bigint;
        v_signed_value jsonb;
        v_previous jsonb;
      begin
        if not (old."status" = 'open' and new."status" = 'resolved') then
          return new;
        end if;
        v_visit_id := "review_record_visit"(new."record_id");
        if v_visit_id is null then
          return new;
        end if;
        select v."fields" ->> 'status' into v_status from "sync_record" v
         where v."id" = v_visit_id and v."collection" = 'visit';
        if v_status is null or v_status not in ('signed', 'countersigned') then
          return new;
        end if;
        if new."note" is null or btrim(new."note") = '' then
          raise exception 'note: a dispute on a % visit is resolved as an Addendum, which needs a note saying why', v_status
            using errcode = '23514';
        end if;
        -- When the visit was last signed, and what this field held then.
        select max(h."version") into v_signed_version from "review_field_value" h
         where h."record_id" = v_visit_id and h."field" = 'status' and h."value" = to_jsonb('signed'::text);
        if v_signed_version is not null then
          select h."value" into v_signed_value from "review_field_value" h
           where h."record_id" = new."record_id" and h."field" = new."field" and h."version" <= v_signed_version
           order by h."version" desc limit 1;
        end if;
        select h."value" into v_previous from "review_field_value" h
         where h."record_id" = new."record_id" and h."field" = new."field"
           and h."version" < coalesce(new."resolution_version", 9223372036854775807)
         order by h."version" desc limit 1;
        insert into "review_addendum"
          ("id", "conflict_id", "visit_id", "collection", "record_id", "site_id", "field", "visit_status",
           "signed_value", "previous_value", "value", "note", "by_user", "device", "version", "at")
        values (gen_random_uuid(), new."id", v_visit_id, new."collection", new."record_id", new."site_id",
                new."field", v_status, v_signed_value, v_previous, new."resolved_value", new."note",
                new."resolved_by", new."resolved_device", new."resolution_version",
                coalesce(new."resolved_at", now()))
        on conflict ("conflict_id") do nothing;
        return new;
      end $$;`);
    this.addSql(`
      create trigger "review_addendum_on_resolve"
        after update of "status" on "sync_conflict"
        for each row execute function "review_addendum_on_resolve"();`);
  }

  override async down(): Promise<void> {
    this.addSql('drop trigger if exists "review_addendum_on_resolve" on "sync_conflict";');
    this.addSql('drop function if exists "review_addendum_on_resolve"();');
    this.addSql('drop function if exists "review_record_visit"(uuid);');
    this.addSql('drop table if exists "review_addendum";');
    this.addSql('drop trigger if exists "review_capture_field_values" on "sync_record";');
    this.addSql('drop function if exists "review_capture_field_values"();');
    this.addSql('drop table if exists "review_field_value";');
  }
}
