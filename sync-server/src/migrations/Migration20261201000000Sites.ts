import { Migration } from '@mikro-orm/migrations';

export class Migration20261201000000Sites extends Migration {
  override async up(): Promise<void> {
    this.addSql(`
      create table "site" (
        "id" uuid primary key,
        "name" text not null,
        "kind" text not null check ("kind" in ('clinic', 'outreach')),
        "address" text null,
        "time_zone" text not null default 'Europe/London',
        "created_at" timestamptz not null default now()
      );`);
  }

  override async down(): Promise<void> {
    this.addSql('drop table if exists "site";');
  }
}
