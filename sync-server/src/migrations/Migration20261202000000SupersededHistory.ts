import { Migration } from '@mikro-orm/migrations';

/**
 * A record's history keeps only superseded values; the current ones are read from sync_record.
 *
 * The Review desk's history (Migration20261201040000ReviewDesk) copied every newly stamped field
 * into its own `review_field_value` row from a row-level trigger, so a push of 500 changes ran
 * the trigger function 500 times and inserted thousands of rows duplicating what sync_record
 * already holds; it cost more than writing the records themselves. The history now follows the
 * current-table-plus-history-table pattern of system-versioned tables: sync_record holds each
 * field's current value and stamp, and `review_superseded` receives a field's previous value and
 * stamp when a write replaces it (or the record is purged past the offline horizon). Statement-
 * level triggers read the statement's transition tables, so a push writes at most one history
 * row per updated record, in one set-based statement, and a push of new records writes none.
 *
 * `review_field_value` becomes a view with the old columns — every value each field has held,
 * one row per field and version: the superseded ones and the current ones. Its readers (the
 * record history, the countersign queue and the Addendum trigger on sync_conflict) are
 * unchanged. As before, history is written in the writing transaction by whichever path writes
 * a record (push, resolution, countersign); the values recorded so far are carried over.
 */
export class Migration20261202000000SupersededHistory extends Migration {
  override async up(): Promise<void> {
    this.addSql(`
      create table "review_superseded" (
        "id" bigint generated always as identity primary key,
        "record_id" uuid not null,
        "collection" text not null,
        "site_id" uuid not null,
        "values" jsonb not null,
        "stamps" jsonb not null
      );`);
    this.addSql(
      `create index "review_superseded_record_idx" on "review_superseded" ("record_id");`,
    );

    // Carry over every recorded value that is no longer a field's current one (the current ones
    // are read from sync_record from now on), one row per record and version.
    this.addSql(`
      insert into "review_superseded" ("record_id", "collection", "site_id", "values", "stamps")
      select h."record_id", min(h."collection"), (array_agg(h."site_id"))[1],
             jsonb_object_agg(h."field", coalesce(h."value", 'null'::jsonb)),
             jsonb_object_agg(h."field", jsonb_build_object(
               'hlc', h."hlc", 'version', h."version", 'by', h."by_user", 'device', h."device", 'at', h."at"))
        from "review_field_value" h
       where not exists (
               select 1 from "sync_record" r
                where r."id" = h."record_id"
                  and r."stamps" -> h."field" ->> 'hlc' = h."hlc"
                  and (r."stamps" -> h."field" ->> 'version')::bigint = h."version")
       group by h."record_id", h."version"
       order by h."record_id", h."version";`);

    this.addSql('drop trigger if exists "review_capture_field_values" on "sync_record";');
    this.addSql('drop function if exists "review_capture_field_values"();');
    this.addSql('drop table "review_field_value";');

    // The value and stamp a field held before this statement replaced (or purged) it. A stamp
    // written before stamps carried their time gets the row's last write time.
    const superseded = (where: string) => `
          select jsonb_object_agg(s.key,
                   case when s.key = 'deleted' then to_jsonb(o."deleted")
                        else coalesce(o."fields" -> s.key, 'null'::jsonb) end) as "values",
                 jsonb_object_agg(s.key,
                   case when s.value ? 'at' then s.value
                        else s.value || jsonb_build_object('at', o."updated_at") end) as "stamps"
            from jsonb_each(o."stamps") s
           ${where}`;
    // One row per record the statement replaced fields of (or purged): its superseded values.
    const captureFunction = (name: string, rows: string, where: string) => `
      create function "${name}"() returns trigger language plpgsql as $$
      begin
        insert into "review_superseded" ("record_id", "collection", "site_id", "values", "stamps")
        select o."id", o."collection", o."site_id", c."values", c."stamps"
          from ${rows}
          cross join lateral (${superseded(where)}) c
         where c."values" is not null;
        return null;
      end $$;`;
    this.addSql(
      captureFunction(
        'review_capture_superseded',
        '"old_rows" o join "new_rows" n on n."id" = o."id"',
        'where (n."stamps" -> s.key) is distinct from s.value',
      ),
    );
    this.addSql(captureFunction('review_capture_purged', '"old_rows" o', ''));
    this.addSql(`
      create trigger "review_capture_superseded"
        after update on "sync_record" referencing old table as "old_rows" new table as "new_rows"
        for each statement execute function "review_capture_superseded"();`);
    this.addSql(`
      create trigger "review_capture_purged"
        after delete on "sync_record" referencing old table as "old_rows"
        for each statement execute function "review_capture_purged"();`);

    // Every value each field has held: the superseded ones, then the current ones.
    this.addSql(`
      create view "review_field_value" as
      select h."record_id", h."collection", h."site_id", s.key as "field",
             h."values" -> s.key as "value",
             s.value ->> 'hlc' as "hlc",
             (s.value ->> 'version')::bigint as "version",
             s.value ->> 'by' as "by_user",
             s.value ->> 'device' as "device",
             (s.value ->> 'at')::timestamptz as "at"
        from "review_superseded" h
        cross join lateral jsonb_each(h."stamps") s
      union all
      select r."id", r."collection", r."site_id", s.key,
             case when s.key = 'deleted' then to_jsonb(r."deleted") else r."fields" -> s.key end,
             s.value ->> 'hlc',
             (s.value ->> 'version')::bigint,
             s.value ->> 'by',
             s.value ->> 'device',
             coalesce((s.value ->> 'at')::timestamptz, r."updated_at")
        from "sync_record" r
        cross join lateral jsonb_each(r."stamps") s;`);
  }

  override async down(): Promise<void> {
    this.addSql('drop view if exists "review_field_value";');
    this.addSql('drop trigger if exists "review_capture_superseded" on "sync_record";');
    this.addSql('drop trigger if exists "review_capture_purged" on "sync_record";');
    this.addSql('drop function if exists "review_capture_superseded"();');
    this.addSql('drop function if exists "review_capture_purged"();');
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
      insert into "review_field_value"
        ("record_id", "collection", "site_id", "field", "value", "hlc", "version", "by_user", "device", "at")
      select h."record_id", h."collection", h."site_id", s.key, h."values" -> s.key,
             s.value ->> 'hlc', (s.value ->> 'version')::bigint,
             s.value ->> 'by', s.value ->> 'device', (s.value ->> 'at')::timestamptz
        from "review_superseded" h cross join lateral jsonb_each(h."stamps") s
      on conflict do nothing;`);
    this.addSql(`
      insert into "review_field_value"
        ("record_id", "collection", "site_id", "field", "value", "hlc", "version", "by_user", "device", "at")
      select r."id", r."collection", r."site_id", s.key,
             case when s.key = 'deleted' then to_jsonb(r."deleted") else r."fields" -> s.key end,
             s.value ->> 'hlc', (s.value ->> 'version')::bigint, s.value ->> 'by', s.value ->> 'device',
             coalesce((s.value ->> 'at')::timestamptz, r."updated_at")
        from "sync_record" r cross join lateral jsonb_each(r."stamps") s
      on conflict do nothing;`);
    this.addSql('drop table "review_superseded";');
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
  }
}
