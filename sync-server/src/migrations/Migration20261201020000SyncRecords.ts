import { Migration } from '@mikro-orm/migrations';

/**
 * Storage of synced records (docs/sync-protocol.md): one row per record with its fields and
 * per-field stamps, the idempotency log of change ids with their first result, the conflicts with
 * every candidate, and the tombstone horizon marker.
 *
 * Versions are not taken from a sequence: a version is `top-level transaction id × 1000 + n`
 * (n = 1..999 within the transaction), which makes every version of an in-flight transaction
 * greater than every version of the transactions PostgreSQL reports as finished; see
 * records/record-version.ts for why pull cursors need exactly that.
 */
export class Migration20261201020000SyncRecords extends Migration {
  override async up(): Promise<void> {
    this.addSql(`
      create table "sync_record" (
        "id" uuid primary key,
        "collection" text not null,
        "site_id" uuid not null,
        "version" bigint not null,
        "deleted" boolean not null default false,
        "fields" jsonb not null,
        "stamps" jsonb not null,
        "created_at" timestamptz not null,
        "updated_at" timestamptz not null
      );`);
    this.addSql(`create index "sync_record_version_idx" on "sync_record" ("version");`);
    this.addSql(
      `create index "sync_record_site_version_idx" on "sync_record" ("site_id", "version");`,
    );
    this.addSql(
      `create index "sync_record_tombstone_idx" on "sync_record" ("updated_at") where "deleted";`,
    );

    this.addSql(`
      create table "sync_change" (
        "change_id" uuid primary key,
        "record_id" uuid null,
        "user_id" uuid not null,
        "device_id" text null,
        "status" text not null check ("status" in ('pending', 'applied', 'merged', 'conflict', 'rejected')),
        "version" bigint null,
        "result" jsonb not null,
        "received_at" timestamptz not null
      );`);
    this.addSql(`create index "sync_change_received_idx" on "sync_change" ("received_at");`);

    this.addSql(`
      create table "sync_conflict" (
        "id" uuid primary key,
        "collection" text not null,
        "record_id" uuid not null references "sync_record" ("id") on delete cascade,
        "site_id" uuid not null,
        "field" text not null,
        "status" text not null check ("status" in ('open', 'resolved')),
        "opened_at" timestamptz not null,
        "candidates" jsonb not null,
        "resolved_at" timestamptz null,
        "resolved_by" uuid null,
        "resolved_device" text null,
        "resolved_value" jsonb null,
        "resolution_version" bigint null,
        "note" text null
      );`);
    this.addSql(
      `create unique index "sync_conflict_open_field_idx" on "sync_conflict" ("record_id", "field") where "status" = 'open';`,
    );
    this.addSql(
      `create index "sync_conflict_site_idx" on "sync_conflict" ("site_id", "status", "id");`,
    );
    this.addSql(`create index "sync_conflict_record_idx" on "sync_conflict" ("record_id");`);

    this.addSql(`
      create table "sync_horizon" (
        "singleton" boolean primary key default true check ("singleton"),
        "horizon_version" bigint not null default 0,
        "pruned_at" timestamptz null
      );`);
    this.addSql(`insert into "sync_horizon" ("singleton", "horizon_version") values (true, 0);`);
  }

  override async down(): Promise<void> {
    this.addSql('drop table if exists "sync_horizon";');
    this.addSql('drop table if exists "sync_conflict";');
    this.addSql('drop table if exists "sync_change";');
    this.addSql('drop table if exists "sync_record";');
  }
}
