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

/**
 * Where an audit column's value comes from in `insertSelectSql`: a column of the caller's rows
 * (as text, or an empty JSON array where it is null, when asked), or a constant.
 */
export type AuditValue<K extends string> =
  { column: K; as?: 'text' | 'json-array' } | { constant: string | null };

const SQL_NAME = /^[a-z_][a-z0-9_]*$/i;

function sqlName(name: string, what: string): string {
  if (!SQL_NAME.test(name)) throw new Error(`audit ${what}: ${name} is not a plain SQL name`);
  return name;
}

function auditValueSql<K extends string>(rows: string, source: AuditValue<K>): string {
  if ('constant' in source) {
    return source.constant === null ? 'null' : `'${source.constant.replaceAll("'", "''")}'`;
  }
  const column = `${rows}."${sqlName(source.column, 'column')}"`;
  if (source.as === 'text') return `${column}::text`;
  if (source.as === 'json-array') return `coalesce(${column}, '[]'::jsonb)`;
  return column;
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
   * `insert into "audit_event" … select … from "<rows>"` for a data-modifying WITH query, each
   * column taken from a column of the caller's rows (a push logs each change's result and audits
   * it in one statement, from one JSON parameter that says each thing once). `rows` names a WITH
   * query of the same statement; only its rows whose `onlyWhere` column is set are audited. The
   * detail is built in SQL from the keys given here, so none of them may look like a
   * credential's; its values are the caller's to keep free of secrets, as `record`'s are. The
   * returned bindings are the time, the scope, the actor and the tablet.
   */
  insertSelectSql<K extends string>(input: {
    scope: AuditScope;
    actorId: string | null;
    deviceId: string | null;
    /** The name of the WITH query whose rows are audited. */
    rows: string;
    /** Audits only the rows where this column is not null. */
    onlyWhere?: K;
    /** A uuid column, unique per row: the event's id. */
    id: AuditValue<K>;
    kind: AuditValue<K>;
    siteId: AuditValue<K>;
    subjectType: AuditValue<K>;
    subjectId: AuditValue<K>;
    detail: Readonly<Record<string, AuditValue<K>>>;
  }): { sql: string; bindings: (string | null)[] } {
    const secret = Object.keys(input.detail).find((key) => SECRET_KEY.test(key));
    if (secret !== undefined)
      throw new Error(`audit detail key ${secret} looks like a credential and is not stored`);
    const rows = sqlName(input.rows, 'rows');
    const value = (source: AuditValue<K>) => auditValueSql(rows, source);
    const detail = Object.entries(input.detail)
      .map(([key, source]) => `'${key.replaceAll("'", "''")}', ${value(source)}`)
      .join(', ');
    const where =
      input.onlyWhere === undefined
        ? ''
        : ` where ${rows}."${sqlName(input.onlyWhere, 'onlyWhere')}" is not null`;
    return {
      sql: `insert into "audit_event" ("occurred_at", "scope", "actor_id", "device_id", "id", "kind", "site_id", "subject_type", "subject_id", "detail")
            select ?::timestamptz, ?::text, ?::uuid, ?::uuid, ${value(input.id)}, ${value(input.kind)}, ${value(input.siteId)},
                   ${value(input.subjectType)}, ${value(input.subjectId)}, jsonb_build_object(${detail})
            from "${rows}"${where}`,
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
