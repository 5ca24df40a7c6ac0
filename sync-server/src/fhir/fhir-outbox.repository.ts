// The FHIR hand-off's own tables (migration FhirHandoff): the outbox of visit Bundles to send and
// the version up to which visits and Addenda were read. Several server processes run the worker:
// the scan holds the cursor row's lock for its transaction, and a due row is claimed with FOR
// UPDATE SKIP LOCKED and a lease, as the mail outbox does (mail/mail-outbox.repository.ts).
import type { EntityManager } from '@mikro-orm/postgresql';
import { sqlRows } from '../database/sql';

export type FhirOutboxStatus = 'queued' | 'sending' | 'sent' | 'refused';

export interface FhirOutboxRow {
  id: string;
  visit_id: string;
  site_id: string;
  occasion: string;
  status: FhirOutboxStatus;
  attempts: number;
  next_attempt_at: Date;
  last_error: string | null;
  location: string | null;
  created_at: Date;
  sent_at: Date | null;
}

/** The cursor, locked for the caller's transaction (a second scanner waits). */
export async function lockHandoffCursor(em: EntityManager): Promise<number> {
  const [row] = await sqlRows<{ after: string }>(
    em,
    `select "after_version"::text as "after" from "fhir_handoff_cursor" for update`,
  );
  return Number(row?.after ?? 0);
}

export async function moveHandoffCursor(em: EntityManager, after: number): Promise<void> {
  await sqlRows(
    em,
    `update "fhir_handoff_cursor" set "after_version" = greatest("after_version", ?)`,
    [after],
  );
}

/** Queues an occasion of a visit; false when it was queued before. */
export async function enqueueHandoff(
  em: EntityManager,
  row: { id: string; visitId: string; siteId: string; occasion: string },
  at: Date,
): Promise<boolean> {
  const rows = await sqlRows<{ id: string }>(
    em,
    `insert into "fhir_outbox" ("id", "visit_id", "site_id", "occasion", "status", "attempts", "next_attempt_at", "created_at")
     values (?::uuid, ?::uuid, ?::uuid, ?, 'queued', 0, ?::timestamptz, ?::timestamptz)
     on conflict ("visit_id", "occasion") do nothing returning "id"`,
    [row.id, row.visitId, row.siteId, row.occasion, at.toISOString(), at.toISOString()],
  );
  return rows.length > 0;
}

/** Claims up to `limit` due rows for this process until `leaseUntil`. */
export async function claimDueHandoffs(
  em: EntityManager,
  now: Date,
  leaseUntil: Date,
  limit: number,
): Promise<FhirOutboxRow[]> {
  return em.transactional(async (tx) => {
    const due = await sqlRows<{ id: string }>(
      tx,
      `select "id" from "fhir_outbox"
        where ("status" = 'queued' and "next_attempt_at" <= ?::timestamptz)
           or ("status" = 'sending' and "lease_until" < ?::timestamptz)
        order by "next_attempt_at", "id"
        limit ? for update skip locked`,
      [now.toISOString(), now.toISOString(), limit],
    );
    if (due.length === 0) return [];
    return sqlRows<FhirOutboxRow>(
      tx,
      `update "fhir_outbox" set "status" = 'sending', "lease_until" = ?::timestamptz
        where "id" in (${due.map(() => '?::uuid').join(', ')})
        returning *`,
      [leaseUntil.toISOString(), ...due.map((d) => d.id)],
    );
  });
}

export async function markHandoffSent(
  em: EntityManager,
  id: string,
  location: string | null,
  at: Date,
): Promise<void> {
  await sqlRows(
    em,
    `update "fhir_outbox" set "status" = 'sent', "attempts" = "attempts" + 1, "sent_at" = ?::timestamptz,
        "location" = ?, "lease_until" = null, "last_error" = null where "id" = ?::uuid`,
    [at.toISOString(), location, id],
  );
}

export async function markHandoffFailed(
  em: EntityManager,
  id: string,
  error: string,
  next: { retryAt: Date } | { refused: true },
): Promise<void> {
  if ('refused' in next) {
    await sqlRows(
      em,
      `update "fhir_outbox" set "status" = 'refused', "attempts" = "attempts" + 1, "last_error" = ?, "lease_until" = null
        where "id" = ?::uuid`,
      [error, id],
    );
  } else {
    await sqlRows(
      em,
      `update "fhir_outbox" set "status" = 'queued', "attempts" = "attempts" + 1, "last_error" = ?,
          "next_attempt_at" = ?::timestamptz, "lease_until" = null where "id" = ?::uuid`,
      [error, next.retryAt.toISOString(), id],
    );
  }
}

/** The visit's rows, newest occasion first. */
export async function handoffsOfVisit(
  em: EntityManager,
  visitId: string,
): Promise<FhirOutboxRow[]> {
  return sqlRows<FhirOutboxRow>(
    em,
    `select * from "fhir_outbox" where "visit_id" = ?::uuid order by "created_at" desc, "id" desc`,
    [visitId],
  );
}
