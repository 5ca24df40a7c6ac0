// The clinic's settings as stored: one row per setting that an admin has changed, its value as
// JSON (table "clinic_setting"). Raw SQL on the caller's transaction.
import type { EntityManager } from '@mikro-orm/postgresql';
import { jsonParam, sqlRows } from '../database/sql';

export interface StoredSetting {
  key: string;
  value: unknown;
}

export async function readStoredSettings(em: EntityManager): Promise<StoredSetting[]> {
  return sqlRows<StoredSetting>(em, `select "key", "value" from "clinic_setting" order by "key"`);
}

export async function writeSetting(
  em: EntityManager,
  setting: StoredSetting & { updatedBy: string | null; updatedAt: Date },
): Promise<void> {
  await sqlRows(
    em,
    `insert into "clinic_setting" ("key", "value", "updated_by", "updated_at")
     values (?, ?::jsonb, ?, ?)
     on conflict ("key") do update
       set "value" = excluded."value", "updated_by" = excluded."updated_by",
           "updated_at" = excluded."updated_at"`,
    [setting.key, jsonParam(setting.value), setting.updatedBy, setting.updatedAt.toISOString()],
  );
}
