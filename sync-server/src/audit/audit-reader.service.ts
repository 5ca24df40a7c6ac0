// Reads the audit trail, newest first: admins the account part (sign-ins, tablets, people,
// sites), supervisors the clinical part for their own sites. Nobody reads both.
import { EntityManager } from '@mikro-orm/postgresql';
import { ForbiddenException, Inject, Injectable } from '@nestjs/common';
import type { AuthUser } from '../auth/auth-user';
import type { AuditQuery } from './audit-query.schema';

export interface AuditEventView {
  id: string;
  occurredAt: string;
  scope: 'account' | 'clinical';
  kind: string;
  actorId: string | null;
  deviceId: string | null;
  siteId: string | null;
  subjectType: string;
  subjectId: string | null;
  detail: Record<string, unknown>;
}

export interface AuditPage {
  items: AuditEventView[];
  /** Pass as `cursor` for the next (older) page; null at the end. */
  next: string | null;
}

interface AuditRow {
  seq: string;
  id: string;
  occurred_at: Date;
  scope: 'account' | 'clinical';
  kind: string;
  actor_id: string | null;
  device_id: string | null;
  site_id: string | null;
  subject_type: string;
  subject_id: string | null;
  detail: Record<string, unknown>;
}

@Injectable()
export class AuditReader {
  constructor(@Inject(EntityManager) private readonly em: EntityManager) {}

  async page(caller: AuthUser, query: AuditQuery): Promise<AuditPage> {
    if (query.scope === 'account' && caller.role !== 'admin') {
      throw new ForbiddenException('The account audit is read by admins.');
    }
    if (query.scope === 'clinical' && caller.role !== 'supervisor') {
      throw new ForbiddenException('The clinical audit is read by supervisors of the site.');
    }
    const limit = query.limit ?? 100;
    const params: unknown[] = [query.scope];
    let where = `"scope" = ?`;
    if (query.cursor) {
      where += ` and "seq" < ?`;
      params.push(query.cursor);
    }
    if (query.scope === 'clinical') {
      if (caller.siteIds.length === 0) return { items: [], next: null };
      where += ` and "site_id" in (${caller.siteIds.map(() => '?').join(', ')})`;
      params.push(...caller.siteIds);
    }
    params.push(limit + 1);
    const rows = await this.em.fork().execute<AuditRow[]>(
      `select "seq"::text as "seq", "id", "occurred_at", "scope", "kind", "actor_id", "device_id",
              "site_id", "subject_type", "subject_id", "detail"
         from "audit_event" where ${where} order by "audit_event"."seq" desc limit ?`,
      params,
    );
    const more = rows.length > limit;
    const pageRows = rows.slice(0, limit);
    return {
      items: pageRows.map((row) => ({
        id: row.id,
        occurredAt: new Date(row.occurred_at).toISOString(),
        scope: row.scope,
        kind: row.kind,
        actorId: row.actor_id,
        deviceId: row.device_id,
        siteId: row.site_id,
        subjectType: row.subject_type,
        subjectId: row.subject_id,
        detail: row.detail,
      })),
      next: more ? (pageRows[pageRows.length - 1]?.seq ?? null) : null,
    };
  }
}
