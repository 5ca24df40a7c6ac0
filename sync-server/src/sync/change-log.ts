// The idempotency log: every change id the server has answered, with its first result.
// A change id is claimed (inserted) before its change is planned; a second request carrying the
// same id waits on that row until the first commits and then answers with the stored result.
import type { EntityManager } from '@mikro-orm/postgresql';
import type { PushResult } from '@fuselight/shared';
import { jsonParam, sqlRows } from '../records/sql';

/** Claims the change ids (sorted, so two requests never wait on each other). Returns the new ones. */
export async function claimChangeIds(
  em: EntityManager,
  changeIds: readonly string[],
  claimant: { userId: string; deviceId: string | null },
  at: Date,
): Promise<Set<string>> {
  if (changeIds.length === 0) return new Set();
  const rows = await sqlRows<{ change_id: string }>(
    em,
    `insert into "sync_change" ("change_id", "user_id", "device_id", "status", "result", "received_at")
     select x.id, ?::uuid, ?, 'pending', '{}'::jsonb, ?::timestamptz
       from (select jsonb_array_elements_text(?::jsonb)::uuid as id) x order by x.id
     on conflict ("change_id") do nothing
     returning "change_id"`,
    [claimant.userId, claimant.deviceId, at.toISOString(), jsonParam([...changeIds].sort())],
  );
  return new Set(rows.map((row) => row.change_id));
}

export async function firstResults(
  em: EntityManager,
  changeIds: readonly string[],
): Promise<Map<string, PushResult>> {
  const found = new Map<string, PushResult>();
  if (changeIds.length === 0) return found;
  const rows = await sqlRows<{ change_id: string; result: PushResult }>(
    em,
    `select "change_id", "result" from "sync_change"
      where "change_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)`,
    [jsonParam(changeIds)],
  );
  for (const row of rows) found.set(row.change_id, row.result);
  return found;
}

export interface ChangeLogEntry {
  result: PushResult;
  recordId: string | null;
}

export async function storeResults(
  em: EntityManager,
  entries: readonly ChangeLogEntry[],
): Promise<void> {
  if (entries.length === 0) return;
  await sqlRows(
    em,
    `update "sync_change" c set "status" = x."status", "version" = x."version", "record_id" = x."record_id", "result" = x."result"
       from jsonb_to_recordset(?::jsonb) as x("change_id" uuid, "status" text, "version" bigint, "record_id" uuid, "result" jsonb)
      where c."change_id" = x."change_id"`,
    [
      jsonParam(
        entries.map(({ result, recordId }) => ({
          change_id: result.changeId,
          status: result.status,
          version: result.status === 'rejected' ? null : result.version,
          record_id: recordId,
          result,
        })),
      ),
    ],
  );
}
