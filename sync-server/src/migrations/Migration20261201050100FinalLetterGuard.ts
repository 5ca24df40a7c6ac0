import { Migration } from '@mikro-orm/migrations';

/**
 * A final letter never changes: whatever path writes a record (a push, a dispute resolution, a
 * server job), PostgreSQL refuses an update of a final letter that touches anything but the send
 * request and the mailer's delivery fields, and refuses its deletion. The error is a data
 * exception (SQLSTATE 22023), which the push path answers by rejecting only that change.
 */
export class Migration20261201050100FinalLetterGuard extends Migration {
  override async up(): Promise<void> {
    this.addSql(`
      create function "fuselight_final_letter_guard"() returns trigger language plpgsql as $$
      declare
        mutable text[] := array['deliveryState', 'deliveryAttempts', 'sentAt', 'deliveryError', 'sendRequestedAt', 'copyToPatient'];
      begin
        if old."collection" = 'letter' and not old."deleted" and old."fields" ->> 'status' = 'final' then
          if new."deleted" then
            raise exception 'fuselight: letter %: a final letter cannot be deleted', old."id" using errcode = '22023';
          end if;
          if (old."fields" - mutable) is distinct from (new."fields" - mutable) then
            raise exception 'fuselight: letter %: a final letter can no longer be changed; write a new letter instead', old."id"
              using errcode = '22023';
          end if;
        end if;
        return new;
      end $$;`);
    this.addSql(`
      create trigger "sync_record_final_letter_guard" before update on "sync_record"
        for each row when (old."collection" = 'letter') execute function "fuselight_final_letter_guard"();`);
  }

  override async down(): Promise<void> {
    this.addSql('drop trigger if exists "sync_record_final_letter_guard" on "sync_record";');
    this.addSql('drop function if exists "fuselight_final_letter_guard"();');
  }
}
