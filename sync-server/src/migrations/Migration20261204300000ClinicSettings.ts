import { Migration } from '@mikro-orm/migrations';

/**
 * The clinic's settings an admin changes (settings/clinic-settings.service.ts): one row per
 * setting that differs from its default, the value as JSON. The first is how long unsynced edits
 * may wait on a tablet before it warns on every screen (`unsyncedWarningHours`, default 24).
 */
export class Migration20261204300000ClinicSettings extends Migration {
  override async up(): Promise<void> {
    this.addSql(`create table "clinic_setting" (
      "key" text primary key,
      "value" jsonb not null,
      "updated_by" uuid null references "app_user" ("id") on delete set null,
      "updated_at" timestamptz not null default now()
    );`);
  }

  override async down(): Promise<void> {
    this.addSql('drop table if exists "clinic_setting";');
  }
}
