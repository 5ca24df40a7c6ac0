import { Migration } from '@mikro-orm/migrations';

/**
 * The Review desk's Disputes list pages and counts its open disputes in SQL, oldest first by
 * default (review/dispute-list-store.ts). This partial index holds the open disputes in that
 * order (opening time, then id, the keyset the list pages by), so a page of the default sort
 * reads the index from the cursor on instead of sorting every open dispute. Counts by site use
 * the existing sync_conflict_site_idx.
 */
export class Migration20261204100000OpenDisputeOrder extends Migration {
  override async up(): Promise<void> {
    this.addSql(
      `create index "sync_conflict_open_age_idx" on "sync_conflict" ("opened_at", "id") where "status" = 'open';`,
    );
  }

  override async down(): Promise<void> {
    this.addSql('drop index if exists "sync_conflict_open_age_idx";');
  }
}
