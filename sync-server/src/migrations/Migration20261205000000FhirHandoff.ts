import { Migration } from '@mikro-orm/migrations';

/**
 * The FHIR hand-off (fhir/): a durable outbox of visit Bundles to send to the hospital record,
 * one row per occasion (signed, countersigned, each Addendum) so an occasion is sent once, and the
 * version up to which the hand-off has read visits and Addenda.
 */
export class Migration20261205000000FhirHandoff extends Migration {
  override up(): void {
    this.addSql(`
      create table "fhir_outbox" (
        "id" uuid primary key,
        "visit_id" uuid not null,
        "site_id" uuid not null,
        "occasion" text not null,
        "status" text not null check ("status" in ('queued', 'sending', 'sent', 'refused')),
        "attempts" integer not null default 0,
        "next_attempt_at" timestamptz not null,
        "lease_until" timestamptz null,
        "last_error" text null,
        "location" text null,
        "created_at" timestamptz not null,
        "sent_at" timestamptz null,
        unique ("visit_id", "occasion")
      );`);
    this.addSql(
      `create index "fhir_outbox_due_idx" on "fhir_outbox" ("next_attempt_at") where "status" in ('queued', 'sending');`,
    );
    this.addSql(`
      create table "fhir_handoff_cursor" (
        "only_row" boolean primary key default true check ("only_row"),
        "after_version" bigint not null
      );`);
    this.addSql(
      `insert into "fhir_handoff_cursor" ("only_row", "after_version") values (true, 0);`,
    );
  }

  override down(): void {
    this.addSql('drop table if exists "fhir_handoff_cursor";');
    this.addSql('drop table if exists "fhir_outbox";');
  }
}
