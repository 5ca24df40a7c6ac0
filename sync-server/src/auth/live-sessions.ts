// Which of many sessions are still live, in one statement: the same rule as DbSessionCheck (the
// session not ended, its person active, its tablet neither revoked nor retired), for the open
// live-changes streams that must close within a second of a revocation, whichever process made it.
import type { EntityManager } from '@mikro-orm/postgresql';
import { jsonParam, sqlRows } from '../database/sql';

export async function liveSessionIds(
  em: EntityManager,
  sessionIds: readonly string[],
): Promise<Set<string>> {
  const wanted = [...new Set(sessionIds)];
  if (wanted.length === 0) return new Set();
  const rows = await sqlRows<{ id: string }>(
    em,
    `select s."id"
       from "auth_session" s
       join "app_user" u on u."id" = s."user_id"
       left join "device" d on d."id" = s."device_id"
      where s."id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
        and s."revoked_at" is null and u."active"
        and (d."id" is null or d."state" not in ('revoked', 'retired'))`,
    [jsonParam(wanted)],
  );
  return new Set(rows.map((row) => row.id));
}
