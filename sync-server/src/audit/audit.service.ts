// The audit trail. Other modules call `record(em, event)` with their own transactional entity
// manager, so an event commits or rolls back with the change it describes (the sync engine
// records every clinical record change this way). Account events (sign-ins, tablets, people,
// sites) are read by admins; clinical events by supervisors of the event's site.
import type { EntityManager } from '@mikro-orm/core';
import type { EntityManager as SqlEntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { AuditEvent, type AuditScope } from './audit-event.entity';

export interface AuditInput {
  /** What happened, dotted: `auth.sign_in`, `device.revoked`, `record.changed`, … */
  kind: string;
  actorId?: string | null;
  deviceId?: string | null;
  siteId?: string | null;
  subjectType: string;
  subjectId?: string | null;
  /** Facts worth keeping. Never a password, hash, token or secret: such keys are dropped. */
  detail?: Record<string, unknown>;
  /** Defaults from the kind: `auth.`, `user.`, `device.` and `site.` kinds are account events. */
  scope?: AuditScope;
}

const ACCOUNT_KIND_PREFIXES = ['auth.', 'user.', 'device.', 'site.'];
const SECRET_KEY = /password|secret|token|hash|enrolment_?code/i;

export function scopeOfKind(kind: string): AuditScope {
  return ACCOUNT_KIND_PREFIXES.some((prefix) => kind.startsWith(prefix)) ? 'account' : 'clinical';
}

function hasSecretKey(value: unknown): boolean {
  if (Array.isArray(value)) return value.some(hasSecretKey);
  if (value && typeof value === 'object' && !(value instanceof Date)) {
    for (const [key, inner] of Object.entries(value)) {
      if (SECRET_KEY.test(key) || hasSecretKey(inner)) return true;
    }
  }
  return false;
}

function stripSecrets(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(stripSecrets);
  if (value && typeof value === 'object' && !(value instanceof Date)) {
    return Object.fromEntries(
      Object.entries(value)
        .filter(([key]) => !SECRET_KEY.test(key))
        .map(([key, inner]) => [key, stripSecrets(inner)]),
    );
  }
  return value;
}

/**
 * Drops any key that looks like it could carry a credential, at any depth. A detail without one
 * (every sync change's) is returned as it is: copying it cost a push more than inserting it.
 */
export function withoutSecrets(value: unknown): unknown {
  return hasSecretKey(value) ? stripSecrets(value) : value;
}

@Injectable()
export class AuditService {
  constructor(
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
  ) {}

  /** Appends one event inside the caller's transaction (`em` is its transactional manager). */
  async record(em: EntityManager, event: AuditInput): Promise<void> {
    await em.insert(AuditEvent, this.row(event));
  }

  /**
   * Appends several events in one statement (a sync push records one per change). Plain SQL over
   * a JSON array bound as one parameter: the ORM's per-entity conversion, and MikroORM's
   * `execute` (which inlines and escapes every parameter into the statement text), cost more
   * than the rest of a push. The time is the same for the whole batch, so it travels once.
   */
  async recordMany(em: EntityManager, events: AuditInput[]): Promise<void> {
    if (events.length === 0) return;
    const occurredAt = this.clock.now().toISOString();
    const rows = events.map((event) => ({
      id: this.ids.uuid(),
      scope: event.scope ?? scopeOfKind(event.kind),
      kind: event.kind,
      actorId: event.actorId ?? null,
      deviceId: event.deviceId ?? null,
      siteId: event.siteId ?? null,
      subjectType: event.subjectType,
      subjectId: event.subjectId ?? null,
      detail: withoutSecrets(event.detail ?? {}),
    }));
    const knex = (em as unknown as SqlEntityManager).getKnex();
    const query = knex.raw(
      `insert into "audit_event"
         ("id", "occurred_at", "scope", "kind", "actor_id", "device_id", "site_id", "subject_type", "subject_id", "detail")
       select r."id", ?::timestamptz, r."scope", r."kind", r."actorId", r."deviceId", r."siteId",
              r."subjectType", r."subjectId", coalesce(r."detail", '{}'::jsonb)
         from jsonb_to_recordset(?::jsonb) as r(
           "id" uuid, "scope" text, "kind" text, "actorId" uuid,
           "deviceId" uuid, "siteId" uuid, "subjectType" text, "subjectId" text, "detail" jsonb)`,
      [occurredAt, JSON.stringify(rows)],
    );
    const trx = em.getTransactionContext<Parameters<typeof query.transacting>[0]>();
    if (trx) query.transacting(trx);
    await query;
  }

  private row(event: AuditInput) {
    return {
      id: this.ids.uuid(),
      occurredAt: this.clock.now(),
      scope: event.scope ?? scopeOfKind(event.kind),
      kind: event.kind,
      actorId: event.actorId ?? null,
      deviceId: event.deviceId ?? null,
      siteId: event.siteId ?? null,
      subjectType: event.subjectType,
      subjectId: event.subjectId ?? null,
      detail: (withoutSecrets(event.detail ?? {}) as Record<string, unknown>) ?? {},
    };
  }
}
