import { Migration } from '@mikro-orm/migrations';

/**
 * How each tablet's data key is protected (docs/threat-model.md), as its heartbeat reports it:
 * device metadata for the Fleet screen, never clinical content. Null until a tablet reports it
 * (tablets of earlier builds never do).
 */
export class Migration20261206000000DeviceKeyProtection extends Migration {
  override async up(): Promise<void> {
    this.addSql(`alter table "device" add column "key_protection" text null
      constraint "device_key_protection_kind" check ("key_protection" in
        ('unprotected', 'server-only', 'pin-only', 'passphrase', 'hardware'));`);
  }

  override async down(): Promise<void> {
    this.addSql('alter table "device" drop column if exists "key_protection";');
  }
}
