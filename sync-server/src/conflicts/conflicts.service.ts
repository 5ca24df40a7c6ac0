// Disputes (sync_conflict rows, "conflicts" on the wire) opened by the merge rule, for
// supervisors of the record's site: the list (paged by dispute id, which sorts by opening time)
// and the resolution, which writes the chosen value as a new version of the field, stamped by
// the supervisor, so every device gets it on its next pull. A resolution on a Signed visit also
// records an Addendum (the review_addendum trigger, in the same transaction); once the
// transaction has committed, the resolution publishes it for tablets (AddendumPublisher).
import { EntityManager } from '@mikro-orm/postgresql';
import {
  BadRequestException,
  ConflictException,
  ForbiddenException,
  Inject,
  Injectable,
  NotFoundException,
  Optional,
} from '@nestjs/common';
import {
  TOMBSTONE_FIELD,
  validateFields,
  type CollectionName,
  type ConflictItem,
  type ConflictListQuery,
  type ConflictListResponse,
  type JsonValue,
  type ResolveConflictRequest,
} from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import type { AuthUser } from '../auth/auth-user';
import { hasSiteAccess, sitesOf } from '../auth/scope';
import { CLOCK, type Clock } from '../common/clock.provider';
import { RecordStore } from '../records/record-store';
import { ServerWriter } from '../records/server-writer';
import { jsonParam, sqlRows } from '../records/sql';
import type { StoredCandidate } from '../records/stored-record';
import { AddendumPublisher } from '../review/addendum-publisher.service';

export const DISPUTE_PAGE_SIZE = 50;

/** A dispute as the list and the resolution read it, with the field's value on the record. */
interface DisputeListRow {
  id: string;
  collection: CollectionName;
  record_id: string;
  site_id: string;
  field: string;
  status: 'open' | 'resolved';
  opened_at: Date | string;
  candidates: StoredCandidate[];
  resolved_at: Date | string | null;
  resolved_by: string | null;
  resolved_value: JsonValue | null;
  note: string | null;
  provisional: JsonValue | null;
}

const DISPUTE_COLUMNS = `c."id", c."collection", c."record_id", c."site_id", c."field", c."status", c."opened_at",
  c."candidates", c."resolved_at", c."resolved_by", c."resolved_value", c."note",
  case when c."field" = '${TOMBSTONE_FIELD}' then to_jsonb(r."deleted") else r."fields" -> c."field" end as "provisional"`;

function itemOf(row: DisputeListRow): ConflictItem {
  const resolved = row.status === 'resolved';
  return {
    id: row.id,
    collection: row.collection,
    recordId: row.record_id,
    field: row.field,
    status: row.status,
    openedAt: new Date(row.opened_at).toISOString(),
    provisional: (resolved ? row.resolved_value : row.provisional) ?? null,
    candidates: row.candidates,
    resolvedAt: row.resolved_at ? new Date(row.resolved_at).toISOString() : null,
    resolvedBy: row.resolved_by,
    ...(resolved ? { resolvedValue: row.resolved_value ?? null } : {}),
    note: row.note,
  };
}

function encodeCursor(id: string): string {
  return Buffer.from(JSON.stringify({ after: id })).toString('base64url');
}

function decodeCursor(cursor: string): string {
  try {
    const after = (
      JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8')) as { after?: unknown }
    ).after;
    if (typeof after === 'string' && /^[0-9a-f-]{36}$/i.test(after)) return after;
  } catch {
    // Falls through to the 400 below.
  }
  throw new BadRequestException(
    'query.cursor: not a cursor this server gave out; start again without it.',
  );
}

@Injectable()
export class ConflictsService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Optional() @Inject(AuditService) private readonly audit: AuditService | null,
    @Inject(AddendumPublisher) private readonly addenda: AddendumPublisher,
    @Inject(RecordStore) private readonly store: RecordStore,
    @Inject(ServerWriter) private readonly writer: ServerWriter,
  ) {}

  async list(user: AuthUser, query: ConflictListQuery): Promise<ConflictListResponse> {
    const sites = sitesOf(user);
    const after = query.cursor ? decodeCursor(query.cursor) : null;
    const rows = await sqlRows<DisputeListRow>(
      this.em.fork(),
      `select ${DISPUTE_COLUMNS}
         from "sync_conflict" c join "sync_record" r on r."id" = c."record_id"
        where c."site_id" in (select jsonb_array_elements_text(?::jsonb)::uuid)
          and (?::text is null or c."status" = ?::text)
          and (?::uuid is null or c."record_id" = ?::uuid)
          and (?::uuid is null or c."id" > ?::uuid)
        order by c."id" limit ?`,
      [
        jsonParam(sites),
        query.status ?? null,
        query.status ?? null,
        query.recordId ?? null,
        query.recordId ?? null,
        after,
        after,
        DISPUTE_PAGE_SIZE + 1,
      ],
    );
    const page = rows.slice(0, DISPUTE_PAGE_SIZE);
    const last = page.at(-1);
    return {
      items: page.map(itemOf),
      next: rows.length > DISPUTE_PAGE_SIZE && last ? encodeCursor(last.id) : null,
    };
  }

  async resolve(
    user: AuthUser,
    conflictId: string,
    body: ResolveConflictRequest,
  ): Promise<ConflictItem> {
    const now = this.clock.now();
    const resolved = await this.em.fork().transactional(async (em) => {
      await this.writer.begin(em);
      const [found] = await sqlRows<{ record_id: string }>(
        em,
        `select "record_id" from "sync_conflict" where "id" = ?`,
        [conflictId],
      );
      if (!found) throw new NotFoundException(`No dispute has the id ${conflictId}.`);
      // Same lock order as a push: the record first, then its dispute.
      const record = (await this.store.lockForUpdate(em, [found.record_id])).get(found.record_id);
      const [row] = await sqlRows<DisputeListRow>(
        em,
        `select ${DISPUTE_COLUMNS} from "sync_conflict" c join "sync_record" r on r."id" = c."record_id"
          where c."id" = ? for update of c`,
        [conflictId],
      );
      if (!record || !row) throw new NotFoundException(`No dispute has the id ${conflictId}.`);
      if (!hasSiteAccess(user, row.site_id) || !hasSiteAccess(user, record.siteId)) {
        throw new ForbiddenException(
          `This dispute belongs to site ${record.siteId}, which is not one of your sites.`,
        );
      }
      if (row.status !== 'open') {
        throw new ConflictException(
          `This dispute was already resolved at ${new Date(row.resolved_at ?? now).toISOString()}.`,
        );
      }
      const value = validateResolution(row.collection, row.field, body.value);

      // The supervisor's stamp is later than every candidate and every stamp on the record; the
      // write does not join the dispute it resolves.
      const written = await this.writer.writeFields(em, {
        recordId: record.id,
        fields: { [row.field]: value },
        by: user.userId,
        deviceId: user.deviceId,
        now,
        after: row.candidates.map((candidate) => candidate.hlc),
        resolving: conflictId,
      });
      if (!written) throw new NotFoundException(`No dispute has the id ${conflictId}.`);
      const { version } = written;
      await this.store.markResolved(em, {
        conflictId,
        at: now,
        by: user.userId,
        device: written.stamp.device,
        value,
        version,
        note: body.note,
      });
      await this.audit?.record(em, {
        kind: 'conflict.resolved',
        actorId: user.userId,
        deviceId: user.deviceId,
        siteId: record.siteId,
        subjectType: record.collection,
        subjectId: record.id,
        detail: { conflictId, field: row.field, version, candidates: row.candidates.length },
      });
      return itemOf({
        ...row,
        status: 'resolved',
        resolved_at: now,
        resolved_by: user.userId,
        resolved_value: value,
        note: body.note,
      });
    });
    // Committed: the Addendum a Signed visit's dispute recorded reaches tablets with the value.
    await this.addenda.publishAfterResolution(conflictId);
    return resolved;
  }
}

/** The chosen value, checked by its field's schema (the tombstone takes true or false). */
function validateResolution(
  collection: CollectionName,
  field: string,
  value: JsonValue,
): JsonValue {
  if (field === TOMBSTONE_FIELD) {
    if (typeof value !== 'boolean') {
      throw new BadRequestException(
        'body.value: the dispute is about deletion; choose true (deleted) or false (kept).',
      );
    }
    return value;
  }
  const result = validateFields(collection, { [field]: value });
  if (!result.ok) {
    throw new BadRequestException(result.errors.map((e) => `body.value: ${e.message}`).join('; '));
  }
  return (result.fields as Record<string, JsonValue>)[field] ?? null;
}
