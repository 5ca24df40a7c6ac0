import { Migration } from '@mikro-orm/migrations';

/**
 * Identity: people and their sites, the Fleet (enrolled tablets), sign-in sessions with rotating
 * refresh tokens, failed-attempt counters shared by every server process, and the append-only
 * audit trail.
 */
export class Migration20261201010000Identity extends Migration {
  override async up(): Promise<void> {
    this.addSql(`
      create table "app_user" (
        "id" uuid primary key,
        "email" text not null,
        "name" text not null,
        "role" text not null check ("role" in ('orthoptist', 'outreach', 'supervisor', 'admin')),
        "needs_countersign" boolean not null default false,
        "password_hash" text not null,
        "must_change_password" boolean not null default false,
        "active" boolean not null default true,
        "created_at" timestamptz not null,
        "updated_at" timestamptz not null,
        "last_sign_in_at" timestamptz null,
        "deactivated_at" timestamptz null
      );`);
    this.addSql(`create unique index "app_user_email_unique" on "app_user" (lower("email"));`);

    this.addSql(`
      create table "user_site" (
        "user_id" uuid not null references "app_user" ("id") on delete cascade,
        "site_id" uuid not null references "site" ("id") on delete restrict,
        primary key ("user_id", "site_id")
      );`);
    this.addSql(`create index "user_site_site_idx" on "user_site" ("site_id");`);

    this.addSql(`
      create table "device" (
        "id" uuid primary key,
        "label" text not null,
        "state" text not null check ("state" in ('pending', 'active', 'retired', 'revoked')),
        "enrolment_code_hash" text null,
        "enrolment_expires_at" timestamptz null,
        "secret_hash" text null,
        "enrolled_at" timestamptz null,
        "last_seen_at" timestamptz null,
        "app_version" text null,
        "outbox_size" integer null,
        "created_by" uuid null references "app_user" ("id") on delete set null,
        "created_at" timestamptz not null,
        "retired_at" timestamptz null,
        "revoked_at" timestamptz null
      );`);
    this.addSql(
      `create unique index "device_enrolment_code_unique" on "device" ("enrolment_code_hash") where "enrolment_code_hash" is not null;`,
    );
    this.addSql(
      `create unique index "device_secret_unique" on "device" ("secret_hash") where "secret_hash" is not null;`,
    );

    this.addSql(`
      create table "device_site" (
        "device_id" uuid not null references "device" ("id") on delete cascade,
        "site_id" uuid not null references "site" ("id") on delete restrict,
        primary key ("device_id", "site_id")
      );`);

    this.addSql(`
      create table "auth_session" (
        "id" uuid primary key,
        "user_id" uuid not null references "app_user" ("id") on delete cascade,
        "device_id" uuid null references "device" ("id") on delete cascade,
        "created_at" timestamptz not null,
        "last_refreshed_at" timestamptz not null,
        "expires_at" timestamptz not null,
        "revoked_at" timestamptz null,
        "revoked_reason" text null
      );`);
    this.addSql(`create index "auth_session_user_idx" on "auth_session" ("user_id");`);
    this.addSql(`create index "auth_session_device_idx" on "auth_session" ("device_id");`);

    this.addSql(`
      create table "refresh_token" (
        "id" uuid primary key,
        "session_id" uuid not null references "auth_session" ("id") on delete cascade,
        "token_hash" text not null unique,
        "created_at" timestamptz not null,
        "spent_at" timestamptz null
      );`);
    this.addSql(`create index "refresh_token_session_idx" on "refresh_token" ("session_id");`);

    this.addSql(`
      create table "attempt_counter" (
        "key" text primary key,
        "window_started_at" timestamptz not null,
        "count" integer not null
      );`);

    this.addSql(`
      create table "audit_event" (
        "seq" bigint generated always as identity primary key,
        "id" uuid not null unique,
        "occurred_at" timestamptz not null,
        "scope" text not null check ("scope" in ('account', 'clinical')),
        "kind" text not null,
        "actor_id" uuid null,
        "device_id" uuid null,
        "site_id" uuid null,
        "subject_type" text not null,
        "subject_id" text null,
        "detail" jsonb not null default '{}'::jsonb
      );`);
    this.addSql(`create index "audit_event_scope_seq_idx" on "audit_event" ("scope", "seq");`);
    this.addSql(`create index "audit_event_site_seq_idx" on "audit_event" ("site_id", "seq");`);
    // The table owner could UPDATE or DELETE despite a REVOKE, so the trail refuses it itself.
    this.addSql(`
      create function "audit_event_append_only"() returns trigger language plpgsql as $$
      begin
        raise exception 'audit_event is append-only: % is not allowed', tg_op
          using errcode = 'insufficient_privilege';
      end;
      $$;`);
    this.addSql(`
      create trigger "audit_event_no_update_delete" before update or delete on "audit_event"
      for each row execute function "audit_event_append_only"();`);
    this.addSql(`
      create trigger "audit_event_no_truncate" before truncate on "audit_event"
      for each statement execute function "audit_event_append_only"();`);
  }

  override async down(): Promise<void> {
    this.addSql('drop table if exists "audit_event";');
    this.addSql('drop function if exists "audit_event_append_only"();');
    this.addSql('drop table if exists "attempt_counter";');
    this.addSql('drop table if exists "refresh_token";');
    this.addSql('drop table if exists "auth_session";');
    this.addSql('drop table if exists "device_site";');
    this.addSql('drop table if exists "device";');
    this.addSql('drop table if exists "user_site";');
    this.addSql('drop table if exists "app_user";');
  }
}
