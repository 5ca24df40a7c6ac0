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

/**
 * The columns of a batch insert: the table's column, the row's key, its SQL type, and whether a
 * value every event of the batch shares may be bound once (ids and details are each event's own).
 */
const AUDIT_BATCH_COLUMNS = [
  { column: 'id', key: 'id', type: 'uuid', sharable: false },
  { column: 'scope', key: 'scope', type: 'text', sharable: true },
  { column: 'kind', key: 'kind', type: 'text', sharable: true },
  { column: 'actor_id', key: 'actorId', type: 'uuid', sharable: true },
  { column: 'device_id', key: 'deviceId', type: 'uuid', sharable: true },
  { column: 'site_id', key: 'siteId', type: 'uuid', sharable: true },
  { column: 'subject_type', key: 'subjectType', type: 'text', sharable: true },
  { column: 'subject_id', key: 'subjectId', type: 'text', sharable: true },
  { column: 'detail', key: 'detail', type: 'jsonb', sharable: false },
] as const;

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
   * than the rest of a push. The time travels once, and so does every column whose value all
   * the events share (a push's actor, tablet, scope and usually site and kind): it is bound as
   * one parameter instead of being repeated in each row of the array.
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
    type Row = (typeof rows)[number];
    const first = rows[0] as Row;
    const shared = AUDIT_BATCH_COLUMNS.filter(
      ({ key, sharable }) => sharable && rows.every((row) => row[key] === first[key]),
    );
    const params: (string | null)[] = [
      occurredAt,
      ...shared.map(({ key }) => first[key] as string | null),
    ];
    const perRow = AUDIT_BATCH_COLUMNS.filter((column) => !shared.includes(column));
    params.push(
      JSON.stringify(
        rows.map((row) => {
          const own: Partial<Row> = {};
          for (const { key } of perRow) (own as Record<string, unknown>)[key] = row[key];
          return own;
        }),
      ),
    );
    // The select list takes the shared values first, as they are bound, then the rows' own.
    const selected = [
      ...shared.map(({ type }) => `?::${type}`),
      ...perRow.map(({ key }) => `r."${key}"`),
    ];
    const columns = [...shared, ...perRow].map(({ column }) => `"${column}"`);
    const knex = (em as unknown as SqlEntityManager).getKnex();
    const query = knex.raw(
      `insert into "audit_event" ("occurred_at", ${columns.join(', ')})
       select ?::timestamptz, ${selected.join(', ')}
         from jsonb_to_recordset(?::jsonb) as r(${perRow.map(({ key, type }) => `"${key}" ${type}`).join(', ')})`,
      params,
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
