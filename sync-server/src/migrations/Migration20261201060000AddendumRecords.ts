import { Migration } from '@mikro-orm/migrations';

/**
 * An Addendum from a resolved dispute now reaches tablets as an `addendum` record. The trigger
 * on sync_conflict keeps writing its review_addendum row in the resolving transaction (so none is
 * ever missed); the review module then writes the synced record for each row and notes its id
 * here. Rows written before this migration have none yet and are published the same way.
 */
export class Migration20261201060000AddendumRecords extends Migration {
  override async up(): Promise<void> {
    this.addSql(`alter table "review_addendum" add column "addendum_record_id" uuid null;`);
    this.addSql(
      `create index "review_addendum_unpublished_idx" on "review_addendum" ("at", "id") where "addendum_record_id" is null;`,
    );
  }

  override async down(): Promise<void> {
    this.addSql('drop index if exists "review_addendum_unpublished_idx";');
    this.addSql('alter table "review_addendum" drop column if exists "addendum_record_id";');
  }
}
