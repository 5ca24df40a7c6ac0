import { Migration } from '@mikro-orm/migrations';

/**
 * The mail outbox (letters queued for SMTP, retried with back-off, picked by several server
 * processes with FOR UPDATE SKIP LOCKED) and attachment storage bookkeeping: which content hashes
 * are stored in the bucket, and how far a resumable upload has come.
 */
export class Migration20261201050000LettersMail extends Migration {
  override async up(): Promise<void> {
    this.addSql(`
      create table "mail_outbox" (
        "id" uuid primary key,
        "letter_id" uuid not null,
        "site_id" uuid not null,
        "recipient_address" text not null,
        "recipient_role" text not null check ("recipient_role" in ('referrer', 'patient')),
        "requested_by" uuid not null,
        "request_hlc" text not null,
        "status" text not null check ("status" in ('queued', 'sending', 'sent', 'failed')),
        "attempts" integer not null default 0,
        "next_attempt_at" timestamptz not null,
        "lease_until" timestamptz null,
        "last_error" text null,
        "message_id" text null,
        "created_at" timestamptz not null,
        "sent_at" timestamptz null,
        unique ("letter_id", "recipient_address", "request_hlc")
      );`);
    this.addSql(
      `create index "mail_outbox_due_idx" on "mail_outbox" ("next_attempt_at") where "status" in ('queued', 'sending');`,
    );
    this.addSql(`create index "mail_outbox_letter_idx" on "mail_outbox" ("letter_id");`);
    // One row per send request seen (keyed by the HLC stamp of the tablet's request), so a
    // request is handled once, whether it was queued or refused.
    this.addSql(`
      create table "mail_request" (
        "letter_id" uuid not null,
        "request_hlc" text not null,
        "requested_by" uuid not null,
        "outcome" text not null check ("outcome" in ('queued', 'refused')),
        "reason" text null,
        "created_at" timestamptz not null,
        primary key ("letter_id", "request_hlc")
      );`);

    this.addSql(`
      create table "attachment_blob" (
        "sha256" text primary key check ("sha256" ~ '^[0-9a-f]{64}$'),
        "byte_size" bigint not null check ("byte_size" > 0),
        "mime_type" text not null,
        "storage_key" text not null,
        "stored_at" timestamptz not null
      );`);
    this.addSql(`
      create table "attachment_upload" (
        "sha256" text primary key check ("sha256" ~ '^[0-9a-f]{64}$'),
        "total_bytes" bigint not null check ("total_bytes" > 0),
        "received_bytes" bigint not null default 0,
        "part_count" integer not null default 0,
        "mime_type" text not null,
        "started_at" timestamptz not null,
        "updated_at" timestamptz not null
      );`);
  }

  override async down(): Promise<void> {
    this.addSql('drop table if exists "attachment_upload";');
    this.addSql('drop table if exists "attachment_blob";');
    this.addSql('drop table if exists "mail_request";');
    this.addSql('drop table if exists "mail_outbox";');
  }
}
