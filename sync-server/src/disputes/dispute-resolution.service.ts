// Disputes (sync_conflict rows, "conflicts" on the wire) opened by the merge rule, for
// supervisors of the record's site: the list of GET /api/conflicts (paged by dispute id, which
// sorts by opening time) and the resolution, which writes the chosen value as a new version of
// the field, stamped by the supervisor, so every device gets it on its next pull. A resolution on
// a Signed or Countersigned visit also records an Addendum in the same transaction
// (AddendumStore); once the transaction has committed, the resolution publishes it for tablets
// (AddendumPublisher).
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
import { AddendumPublisher } from './addendum-publisher.service';
import { AddendumStore } from './addendum-store';
import { DisputeStore, type DisputeWithProvisional } from './dispute-store';

export const DISPUTE_PAGE_SIZE = 50;

function itemOf(row: DisputeWithProvisional): ConflictItem {
  const resolved = row.status === 'resolved';
  return {
    id: row.id,
    collection: row.collection as CollectionName,
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
export class DisputeResolutionService {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Optional() @Inject(AuditService) private readonly audit: AuditService | null,
    @Inject(AddendumPublisher) private readonly publisher: AddendumPublisher,
    @Inject(AddendumStore) private readonly addenda: AddendumStore,
    @Inject(DisputeStore) private readonly disputes: DisputeStore,
    @Inject(RecordStore) private readonly records: RecordStore,
    @Inject(ServerWriter) private readonly writer: ServerWriter,
  ) {}

  async list(user: AuthUser, query: ConflictListQuery): Promise<ConflictListResponse> {
    const after = query.cursor ? decodeCursor(query.cursor) : null;
    const rows = await this.disputes.pageWithProvisional(this.em.fork(), {
      siteIds: sitesOf(user),
      status: query.status ?? null,
      recordId: query.recordId ?? null,
      after,
      limit: DISPUTE_PAGE_SIZE + 1,
    });
    const page = rows.slice(0, DISPUTE_PAGE_SIZE);
    const last = page.at(-1);
    return {
      items: page.map(itemOf),
      next: rows.length > DISPUTE_PAGE_SIZE && last ? encodeCursor(last.id) : null,
    };
  }

  async resolve(
    user: AuthUser,
    disputeId: string,
    body: ResolveConflictRequest,
  ): Promise<ConflictItem> {
    const now = this.clock.now();
    const { item, addendumId } = await this.em.fork().transactional(async (em) => {
      await this.writer.begin(em);
      const recordId = await this.disputes.recordIdOf(em, disputeId);
      if (!recordId) throw new NotFoundException(`No dispute has the id ${disputeId}.`);
      // Same lock order as a push: the record first, then its dispute.
      const record = (await this.records.lockForUpdate(em, [recordId])).get(recordId);
      const row = await this.disputes.lockForResolution(em, disputeId);
      if (!record || !row) throw new NotFoundException(`No dispute has the id ${disputeId}.`);
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
      const value = validateResolution(row.collection as CollectionName, row.field, body.value);
      // The supervisor's stamp is later than every candidate and every stamp on the record; the
      // write does not join the dispute it resolves.
      const written = await this.writer.writeFields(em, {
        recordId: record.id,
        fields: { [row.field]: value },
        by: user.userId,
        deviceId: user.deviceId,
        now,
        after: row.candidates.map((candidate) => candidate.hlc),
        resolving: disputeId,
      });
      if (!written) throw new NotFoundException(`No dispute has the id ${disputeId}.`);
      const { version } = written;
      await this.disputes.markResolved(em, {
        disputeId,
        at: now,
        by: user.userId,
        device: written.stamp.device,
        value,
        version,
        note: body.note,
      });
      // On a Signed or Countersigned visit the resolution is an Addendum, recorded with it.
      const addendumId = await this.addenda.recordForResolution(em, disputeId);
      await this.audit?.record(em, {
        kind: 'conflict.resolved',
        actorId: user.userId,
        deviceId: user.deviceId,
        siteId: record.siteId,
        subjectType: record.collection,
        subjectId: record.id,
        detail: {
          conflictId: disputeId,
          field: row.field,
          version,
          candidates: row.candidates.length,
        },
      });
      return {
        addendumId,
        item: itemOf({
          ...row,
          status: 'resolved',
          resolved_at: now,
          resolved_by: user.userId,
          resolved_value: value,
          note: body.note,
        }),
      };
    });
    // Committed: the Addendum reaches tablets with the value.
    if (addendumId) await this.publisher.publishAfterResolution(addendumId, disputeId);
    return item;
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
