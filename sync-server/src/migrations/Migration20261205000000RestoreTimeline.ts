import { Migration } from '@mikro-orm/migrations';

/**
 * Restores a tablet can notice.
 *
 * `sync_timeline` counts restores from a backup (`npm run restore`, scripts/restore.mjs):
 * `generation` is raised by each restore and `restored_through` is the highest version the
 * backup held. `device.timeline_generation` is the generation a tablet last pulled in. A tablet of
 * an earlier generation whose cursor is above `restored_through` saw changes the restored server
 * no longer has, and may not see later ones: it is told to pull again from the start
 * (sync.service.ts); any other pull marks it current.
 */
export class Migration20261205000000RestoreTimeline extends Migration {
  override async up(): Promise<void> {
    this.addSql(`create table "sync_timeline" (
      "singleton" boolean primary key default true check ("singleton"),
      "generation" integer not null default 0 check ("generation" >= 0),
      "restored_through" bigint null,
      "restored_at" timestamptz null,
      "restored_from" text null
    );`);
    this.addSql(`insert into "sync_timeline" ("singleton") values (true);`);
    this.addSql(
      `alter table "device" add column "timeline_generation" integer not null default 0;`,
    );
  }

  override async down(): Promise<void> {
    this.addSql(`alter table "device" drop column "timeline_generation";`);
    this.addSql(`drop table "sync_timeline";`);
  }
}
