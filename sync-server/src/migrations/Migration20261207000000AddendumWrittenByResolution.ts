import { Migration } from '@mikro-orm/migrations';

/**
 * The resolution writes its Addendum itself. Until now a trigger on sync_conflict
 * (`review_addendum_on_resolve`, Migration20261201040000ReviewDesk) wrote the review_addendum row
 * when a dispute on a Signed or Countersigned visit was resolved; the disputes module's resolve
 * path now inserts that row in its own transaction (disputes/addendum-store.ts) and publishes it
 * after the commit, so the trigger, its function and the helper only it used are dropped. The
 * trigger also refused an Addendum without a note; the table now says so itself (every row
 * written so far has one: the trigger never let one through without it).
 */
export class Migration20261207000000AddendumWrittenByResolution extends Migration {
  override async up(): Promise<void> {
    this.addSql('drop trigger if exists "review_addendum_on_resolve" on "sync_conflict";');
    this.addSql('drop function if exists "review_addendum_on_resolve"();');
    this.addSql('drop function if exists "review_record_visit"(uuid);');
    this.addSql(
      `alter table "review_addendum" add constraint "review_addendum_note_check" check (btrim("note") <> '');`,
    );
  }

  override async down(): Promise<void> {
    this.addSql(
      'alter table "review_addendum" drop constraint if exists "review_addendum_note_check";',
    );
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
}
