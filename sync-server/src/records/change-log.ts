// The idempotency log: every change id the server has answered, with its first result.
// A push first reads the results already committed for its change ids (those changes are
// replays), plans and writes the rest, and then logs their results in one insert that skips ids
// already present. An id it could not log was answered by a concurrent push that committed (or
// is committing) meanwhile: the insert waits on that push's row and then skips it, and the
// caller rolls its writes back and starts again, finding that answer among the committed ones.
// So a change is applied and answered once, however often and concurrently it is sent.
import type { EntityManager } from '@mikro-orm/postgresql';
import { Injectable } from '@nestjs/common';
import type { PushResult } from '@fuselight/shared';
import type { AuditService } from '../audit/audit.service';
import { jsonParam, sqlRows } from '../database/sql';
import {
  encodeChangeLog,
  type ChangeLogEntry,
  type EncodedAcceptedRow,
  type EncodedRejectedRow,
} from './change-log.codec';

export type { ChangeAudit, ChangeLogEntry } from './change-log.codec';

/** The columns of the statement's rows (`x`): those of an encoded row (change-log.codec.ts). */
type ChangeLogColumn = keyof EncodedAcceptedRow | keyof EncodedRejectedRow;

@Injectable()
export class ChangeLog {
  /** The first results already committed for these change ids (the replays of a push). */
  async firstResults(
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

  /**
   * Logs first results (ids sorted, so two pushes never wait on each other in opposite orders) and,
   * in the same statement, writes the audit event of each change that was applied. Returns the ids
   * it logged; an id missing from the answer was already logged by another push (the caller then
   * rolls the attempt back, audit events included).
   *
   * Each change travels once, as one row of one JSON parameter encoded by change-log.codec.ts, and
   * each table takes its columns from it: the stored result and the audit detail are built in SQL
   * from the row's own values, and what most rows share (the audit kind, site and collection) is
   * bound once and filled in where a row carries none (the `x` rows). The change id goes in as sent
   * (text), so a replay answers with the id exactly as it came.
   */
  async storeResults(
    em: EntityManager,
    audit: AuditService,
    entries: readonly ChangeLogEntry[],
    claimant: { userId: string; deviceId: string | null },
    at: Date,
  ): Promise<Set<string>> {
    if (entries.length === 0) return new Set();
    const { shared, rows } = encodeChangeLog(entries);
    const auditInsert = audit.insertSelectSql<ChangeLogColumn>({
      scope: 'clinical',
      actorId: claimant.userId,
      deviceId: claimant.deviceId,
      rows: 'x',
      onlyWhere: 'a',
      id: { column: 'a' },
      kind: { column: 'n' },
      siteId: { column: 'i' },
      subjectType: { column: 'o' },
      subjectId: { column: 'r', as: 'text' },
      detail: {
        collection: { column: 'o' },
        changeId: { column: 'c' },
        version: { column: 'v' },
        status: { column: 's' },
        fields: { column: 'f' },
        conflicts: { column: 'k', as: 'json-array' },
      },
    });
    const logged = await sqlRows<{ change_id: string }>(
      em,
      `with "x" as (
       select r."c", r."s", r."v", r."r", r."k", r."e", r."a", r."f",
              coalesce(r."n", ?::text) as "n", coalesce(r."i", ?::uuid) as "i", coalesce(r."o", ?::text) as "o"
         from jsonb_to_recordset(?::jsonb)
           as r("c" text, "s" text, "v" bigint, "r" uuid, "k" jsonb, "e" text, "a" uuid, "f" jsonb, "n" text, "i" uuid, "o" text)
     ), "logged" as (
       insert into "sync_change" ("change_id", "user_id", "device_id", "status", "version", "record_id", "result", "received_at")
       select x."c"::uuid, ?::uuid, ?, x."s", x."v", x."r",
              case when x."s" = 'rejected'
                then jsonb_build_object('changeId', x."c", 'status', x."s", 'error', x."e")
                else jsonb_build_object('changeId', x."c", 'status', x."s", 'version', x."v", 'conflicts', coalesce(x."k", '[]'::jsonb))
              end,
              ?::timestamptz
         from "x"
        order by x."c"::uuid
       on conflict ("change_id") do nothing
       returning "change_id"
     ), "audited" as (
       ${auditInsert.sql}
     )
     select "change_id" from "logged"`,
      [
        shared.kind,
        shared.siteId,
        shared.collection,
        jsonParam(rows),
        claimant.userId,
        claimant.deviceId,
        at.toISOString(),
        ...auditInsert.bindings,
      ],
    );
    return new Set(logged.map((row) => row.change_id));
  }

  /** Forgets the change ids answered before `cutoff` (the tombstone horizon); returns how many. */
  async prune(em: EntityManager, cutoff: Date): Promise<number> {
    const [row] = await sqlRows<{ n: string }>(
      em,
      `with "gone" as (delete from "sync_change" where "received_at" < ?::timestamptz returning 1)
     select count(*)::text as "n" from "gone"`,
      [cutoff.toISOString()],
    );
    return Number(row?.n ?? 0);
  }
}
