// The idempotency log: every change id the server has answered, with its first result.
// A push first reads the results already committed for its change ids (those changes are
// replays), plans and writes the rest, and then logs their results in one insert that skips ids
// already present. An id it could not log was answered by a concurrent push that committed (or
// is committing) meanwhile: the insert waits on that push's row and then skips it, and the
// caller rolls its writes back and starts again, finding that answer among the committed ones.
// So a change is applied and answered once, however often and concurrently it is sent.
import type { EntityManager } from '@mikro-orm/postgresql';
import type { PushResult } from '@fuselight/shared';
import { jsonParam, sqlRows } from '../records/sql';

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

/**
 * Logs first results (ids sorted, so two pushes never wait on each other in opposite orders).
 * Returns the ids it logged; an id missing from the answer was already logged by another push.
 */
export async function storeResults(
  em: EntityManager,
  entries: readonly ChangeLogEntry[],
  claimant: { userId: string; deviceId: string | null },
  at: Date,
): Promise<Set<string>> {
  if (entries.length === 0) return new Set();
  // The stored result is built from the row's own columns rather than sent a second time: an
  // accepted change's conflicts (usually none) and a rejected change's error are all it adds.
  // The change id goes in as sent (text), so a replay answers with the id exactly as it came.
  const rows = await sqlRows<{ change_id: string }>(
    em,
    `insert into "sync_change" ("change_id", "user_id", "device_id", "status", "version", "record_id", "result", "received_at")
     select x."c"::uuid, ?::uuid, ?, x."s", x."v", x."r",
            case when x."s" = 'rejected'
              then jsonb_build_object('changeId', x."c", 'status', x."s", 'error', x."e")
              else jsonb_build_object('changeId', x."c", 'status', x."s", 'version', x."v", 'conflicts', coalesce(x."k", '[]'::jsonb))
            end,
            ?::timestamptz
       from jsonb_to_recordset(?::jsonb) as x("c" text, "s" text, "v" bigint, "r" uuid, "k" jsonb, "e" text)
      order by x."c"::uuid
     on conflict ("change_id") do nothing
     returning "change_id"`,
    [
      claimant.userId,
      claimant.deviceId,
      at.toISOString(),
      jsonParam(
        entries.map(({ result, recordId }) =>
          result.status === 'rejected'
            ? { c: result.changeId, s: result.status, r: recordId, e: result.error }
            : {
                c: result.changeId,
                s: result.status,
                v: result.version,
                r: recordId,
                ...(result.conflicts.length > 0 ? { k: result.conflicts } : {}),
              },
        ),
      ),
    ],
  );
  return new Set(rows.map((row) => row.change_id));
}
