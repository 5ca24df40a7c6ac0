import { Migration } from '@mikro-orm/migrations';

/**
 * Two things the pull cursor needs after pull pages were found ordered as text.
 *
 * `sync_version_offset` holds one number added to the transaction id before it becomes a version
 * (records/record-version.ts). It is 0 on a new server. It may only be raised, and only while
 * nothing writes records: after a restore into a fresh cluster (whose transaction ids start low
 * again, so new changes must still number above every stored version), and in tests, which
 * start versions just below a power of ten so every pull crosses a change in digit count.
 *
 * `device.pull_epoch` is the cursor epoch a tablet last began a pull from 0 in. Cursors of
 * epoch 1 were handed out while pages were ordered as text and may have skipped records; a
 * tablet that asks for a page after such a cursor is told to pull again from the start
 * (sync.service.ts), and is marked epoch 2 when it does. Tablets enrolled later start in epoch 2.
 */
export class Migration20261204000000VersionOffsetAndCursorEpoch extends Migration {
  override async up(): Promise<void> {
    this.addSql(`create table "sync_version_offset" (
      "singleton" boolean primary key default true check ("singleton"),
      "xid_offset" bigint not null default 0 check ("xid_offset" >= 0)
    );`);
    this.addSql(`insert into "sync_version_offset" ("singleton", "xid_offset") values (true, 0);`);
    this
      .addSql(`create function "sync_version_offset_only_rises"() returns trigger language plpgsql as $$
      begin
        if new."xid_offset" < old."xid_offset" then
          raise exception 'xid_offset: the version offset may only be raised (from % to %), or versions would go backwards', old."xid_offset", new."xid_offset"
            using errcode = '23514';
        end if;
        return new;
      end $$;`);
    this
      .addSql(`create trigger "sync_version_offset_only_rises" before update on "sync_version_offset"
      for each row execute function "sync_version_offset_only_rises"();`);
    // Tablets enrolled before this migration hold epoch-1 cursors; tablets enrolled after start
    // in epoch 2 (CURSOR_EPOCH), which later epochs raise the default to.
    this.addSql(`alter table "device" add column "pull_epoch" integer not null default 1;`);
    this.addSql(`alter table "device" alter column "pull_epoch" set default 2;`);
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "device" drop column "pull_epoch";`);
    this.addSql(`drop table "sync_version_offset";`);
    this.addSql(`drop function "sync_version_offset_only_rises"();`);
  }
}
