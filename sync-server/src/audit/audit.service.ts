// The audit trail. Other modules call `record(em, event)` with their own transactional entity
// manager, so an event commits or rolls back with the change it describes (the sync engine
// records every clinical record change this way). Account events (sign-ins, tablets, people,
// sites) are read by admins; clinical events by supervisors of the event's site.
import type { EntityManager } from '@mikro-orm/core';
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

/** Keys already judged: a push's 500 details repeat the same handful of keys. */
const judgedKeys = new Map<string, boolean>();

function isSecretKey(key: string): boolean {
  let secret = judgedKeys.get(key);
  if (secret === undefined) {
    secret = SECRET_KEY.test(key);
    if (judgedKeys.size < 1000) judgedKeys.set(key, secret);
  }
  return secret;
}

function hasSecretKey(value: unknown): boolean {
  if (Array.isArray(value)) return value.some(hasSecretKey);
  if (value && typeof value === 'object' && !(value instanceof Date)) {
    for (const key in value) {
      if (!Object.hasOwn(value, key)) continue;
      if (isSecretKey(key) || hasSecretKey((value as Record<string, unknown>)[key])) return true;
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
   * The audit half of a statement that also makes the change it describes: an
   * `insert into "audit_event" … select … from <from>` for a data-modifying WITH query, each
   * column an SQL expression over the caller's rows (a push logs each change's result and audits
   * it in one statement, from one JSON parameter that says each thing once). The detail is built
   * in SQL from the keys given here, so none of them may look like a credential's; its values
   * are the caller's to keep free of secrets, as `record`'s are. The returned bindings are the
   * time, the scope, the actor and the tablet; the caller's own follow them, in the order they
   * appear in the text: those of the expressions (id to detail), then those of `from`.
   */
  insertSelectSql(input: {
    scope: AuditScope;
    actorId: string | null;
    deviceId: string | null;
    /** One uuid expression per row, unique: the event's id. */
    id: string;
    kind: string;
    siteId: string;
    subjectType: string;
    subjectId: string;
    detail: Readonly<Record<string, string>>;
    /** `from …` and any `where …` of the rows. */
    from: string;
  }): { sql: string; bindings: (string | null)[] } {
    const secret = Object.keys(input.detail).find((key) => SECRET_KEY.test(key));
    if (secret !== undefined)
      throw new Error(`audit detail key ${secret} looks like a credential and is not stored`);
    const detail = Object.entries(input.detail)
      .map(([key, expression]) => `'${key.replaceAll("'", "''")}', ${expression}`)
      .join(', ');
    return {
      sql: `insert into "audit_event" ("occurred_at", "scope", "actor_id", "device_id", "id", "kind", "site_id", "subject_type", "subject_id", "detail")
            select ?::timestamptz, ?::text, ?::uuid, ?::uuid, ${input.id}, ${input.kind}, ${input.siteId},
                   ${input.subjectType}, ${input.subjectId}, jsonb_build_object(${detail})
            ${input.from}`,
      bindings: [this.clock.now().toISOString(), input.scope, input.actorId, input.deviceId],
    };
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
