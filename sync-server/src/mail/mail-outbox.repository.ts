// The mail outbox table. Several server processes run the worker: a row is claimed inside a short
// transaction with FOR UPDATE SKIP LOCKED and given a lease (status `sending`, lease_until), so no
// two processes send the same row, and a row whose process died is picked up once its lease ends.
import type { EntityManager } from '@mikro-orm/postgresql';
import { sqlRows } from '../database/sql';
import type { SendRequestRow } from '../records/letter-records';

export type MailStatus = 'queued' | 'sending' | 'sent' | 'failed';

export interface MailOutboxRow {
  id: string;
  letter_id: string;
  site_id: string;
  recipient_address: string;
  recipient_role: 'referrer' | 'patient';
  requested_by: string;
  request_hlc: string;
  status: MailStatus;
  attempts: number;
  next_attempt_at: Date;
  last_error: string | null;
  sent_at: Date | null;
}

export interface NewMail {
  id: string;
  letterId: string;
  siteId: string;
  address: string;
  role: 'referrer' | 'patient';
  requestedBy: string;
  requestHlc: string;
}

export async function enqueueMail(em: EntityManager, mail: NewMail, at: Date): Promise<boolean> {
  const rows = await sqlRows<{ id: string }>(
    em,
    `insert into "mail_outbox" ("id", "letter_id", "site_id", "recipient_address", "recipient_role", "requested_by",
        "request_hlc", "status", "attempts", "next_attempt_at", "created_at")
     values (?::uuid, ?::uuid, ?::uuid, ?, ?, ?::uuid, ?, 'queued', 0, ?::timestamptz, ?::timestamptz)
     on conflict ("letter_id", "recipient_address", "request_hlc") do nothing
     returning "id"`,
    [
      mail.id,
      mail.letterId,
      mail.siteId,
      mail.address,
      mail.role,
      mail.requestedBy,
      mail.requestHlc,
      at.toISOString(),
      at.toISOString(),
    ],
  );
  return rows.length > 0;
}

/** Claims up to `limit` due rows for this process until `leaseUntil`. */
export async function claimDueMail(
  em: EntityManager,
  now: Date,
  leaseUntil: Date,
  limit: number,
): Promise<MailOutboxRow[]> {
  return em.transactional(async (tx) => {
    const due = await sqlRows<{ id: string }>(
      tx,
      `select "id" from "mail_outbox"
        where ("status" = 'queued' and "next_attempt_at" <= ?::timestamptz)
           or ("status" = 'sending' and "lease_until" < ?::timestamptz)
        order by "next_attempt_at", "id"
        limit ? for update skip locked`,
      [now.toISOString(), now.toISOString(), limit],
    );
    if (due.length === 0) return [];
    return sqlRows<MailOutboxRow>(
      tx,
      `update "mail_outbox" set "status" = 'sending', "lease_until" = ?::timestamptz
        where "id" in (${due.map(() => '?::uuid').join(', ')})
        returning *`,
      [leaseUntil.toISOString(), ...due.map((d) => d.id)],
    );
  });
}

export async function markSent(
  em: EntityManager,
  id: string,
  messageId: string | null,
  at: Date,
): Promise<void> {
  await sqlRows(
    em,
    `update "mail_outbox" set "status" = 'sent', "attempts" = "attempts" + 1, "sent_at" = ?::timestamptz,
        "message_id" = ?, "lease_until" = null, "last_error" = null where "id" = ?::uuid`,
    [at.toISOString(), messageId, id],
  );
}

export async function markAttemptFailed(
  em: EntityManager,
  id: string,
  error: string,
  next: { retryAt: Date } | { permanent: true },
): Promise<void> {
  if ('permanent' in next) {
    await sqlRows(
      em,
      `update "mail_outbox" set "status" = 'failed', "attempts" = "attempts" + 1, "last_error" = ?, "lease_until" = null
        where "id" = ?::uuid`,
      [error, id],
    );
  } else {
    await sqlRows(
      em,
      `update "mail_outbox" set "status" = 'queued', "attempts" = "attempts" + 1, "last_error" = ?,
          "next_attempt_at" = ?::timestamptz, "lease_until" = null where "id" = ?::uuid`,
      [error, next.retryAt.toISOString(), id],
    );
  }
}

export async function mailOfRequest(
  em: EntityManager,
  letterId: string,
  requestHlc: string,
): Promise<MailOutboxRow[]> {
  return sqlRows<MailOutboxRow>(
    em,
    `select * from "mail_outbox" where "letter_id" = ?::uuid and "request_hlc" = ? order by "recipient_role", "id"`,
    [letterId, requestHlc],
  );
}

export async function recordRequest(
  em: EntityManager,
  request: SendRequestRow,
  outcome: { queued: true } | { refused: string },
  at: Date,
): Promise<boolean> {
  const rows = await sqlRows<{ letter_id: string }>(
    em,
    `insert into "mail_request" ("letter_id", "request_hlc", "requested_by", "outcome", "reason", "created_at")
     values (?::uuid, ?, ?::uuid, ?, ?, ?::timestamptz) on conflict do nothing returning "letter_id"`,
    [
      request.id,
      request.request_hlc,
      request.requested_by,
      'queued' in outcome ? 'queued' : 'refused',
      'refused' in outcome ? outcome.refused : null,
      at.toISOString(),
    ],
  );
  return rows.length > 0;
}
