// The notice a writing transaction sends so every server process hears that records of some sites
// changed (docs/sync-protocol.md, "Live changes"). It is sent with PostgreSQL's `pg_notify`
// inside the writing transaction, so it is delivered when (and only if) the transaction commits,
// to every process LISTENing on the channel (live/change-listener.ts), through whichever process
// made the change. Every writer of "sync_record" sends it through `announceChange`: the push path
// (sync/sync.service.ts) once per push transaction, the ServerWriter once per write (PostgreSQL
// folds identical notices of one transaction into one).
//
// The payload names the sites touched and whether the Review desk's queues (open disputes, the
// countersign queue) may have changed; never a record, a field or a version. A notifying
// transaction takes a cluster-wide lock at commit, so a push sends one small notice at most.
import type { EntityManager } from '@mikro-orm/postgresql';
import { sqlRows } from '../database/sql';

export const CHANGE_CHANNEL = 'fuselight_changes';

export interface ChangeNotice {
  /** Sites whose records changed; 'all' when there were too many to name. */
  sites: readonly string[] | 'all';
  /** True when the open disputes or the countersign queue of those sites may have changed. */
  desk: boolean;
}

/** PostgreSQL refuses payloads of 8000 bytes or more; a notice naming more sites says "all". */
const MAX_PAYLOAD_BYTES = 4000;

export function encodeChangeNotice(notice: ChangeNotice): string {
  const sites = notice.sites === 'all' ? 'all' : [...new Set(notice.sites)].sort();
  const payload = JSON.stringify(notice.desk ? { s: sites, d: 1 } : { s: sites });
  if (Buffer.byteLength(payload) < MAX_PAYLOAD_BYTES) return payload;
  return JSON.stringify(notice.desk ? { s: 'all', d: 1 } : { s: 'all' });
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** The notice of a payload, or null for one this server did not send (it is then ignored). */
export function decodeChangeNotice(payload: string | undefined): ChangeNotice | null {
  if (!payload) return null;
  let raw: unknown;
  try {
    raw = JSON.parse(payload);
  } catch {
    return null;
  }
  if (typeof raw !== 'object' || raw === null) return null;
  const { s, d } = raw as { s?: unknown; d?: unknown };
  const desk = d === 1;
  if (s === 'all') return { sites: 'all', desk };
  if (!Array.isArray(s) || !s.every((id) => typeof id === 'string' && UUID.test(id))) return null;
  return { sites: s as string[], desk };
}

/**
 * Queues the notice in the caller's transaction (delivered on commit, dropped on rollback).
 * Nothing is sent for a write that touched no site.
 */
export async function announceChange(em: EntityManager, notice: ChangeNotice): Promise<void> {
  if (notice.sites !== 'all' && notice.sites.length === 0) return;
  await sqlRows(em, `select pg_notify(?, ?)`, [CHANGE_CHANNEL, encodeChangeNotice(notice)]);
}

/** Collections whose records feed a Review desk queue (signed visits wait for countersigning). */
const DESK_COLLECTIONS: ReadonlySet<string> = new Set(['visit']);

/** What one transaction wrote, gathered as it writes, to announce once before it commits. */
export class ChangeTouch {
  private readonly sites = new Set<string>();
  private desk = false;

  /** Records written (their sites); a visit may enter or leave the countersign queue. */
  records(records: readonly { siteId: string; collection: string }[]): this {
    for (const record of records) {
      this.sites.add(record.siteId);
      if (DESK_COLLECTIONS.has(record.collection)) this.desk = true;
    }
    return this;
  }

  /** Disputes were opened, joined or resolved. */
  disputes(count: number): this {
    if (count > 0) this.desk = true;
    return this;
  }

  notice(): ChangeNotice {
    return { sites: [...this.sites], desk: this.desk };
  }

  announce(em: EntityManager): Promise<void> {
    return announceChange(em, this.notice());
  }
}
