// Reads synced records for letters, mail and attachments (by id, by placement field), and writes
// the server's own field changes (delivery state, upload time) into them so that tablets receive
// those on their next pull. A server write goes through the records module's ServerWriter (device
// `server`, an HLC past every stamp already on the record, a version of the transaction-id
// watermark, joining an open dispute of the field) and is audited like any record change.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import type { CollectionName, JsonValue } from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import { CLOCK, type Clock } from '../common/clock.provider';
import { RecordStore } from '../records/record-store';
import { ServerWriter } from '../records/server-writer';
import type { StoredRecord } from '../records/stored-record';

@Injectable()
export class RecordAccess {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(RecordStore) private readonly store: RecordStore,
    @Inject(ServerWriter) private readonly writer: ServerWriter,
  ) {}

  /** A live (not deleted) record of the collection, or null. */
  async get(
    collection: CollectionName,
    id: string,
    em: EntityManager = this.em.fork(),
  ): Promise<StoredRecord | null> {
    return this.store.live(em, collection, id);
  }

  /** Live records of the collections whose `field` is one of `values`. */
  async findBy(
    collections: readonly CollectionName[],
    field: string,
    values: readonly string[],
    em: EntityManager = this.em.fork(),
  ): Promise<StoredRecord[]> {
    return this.store.liveWhere(em, collections, field, values);
  }

  /**
   * Writes fields of one record as the server, on behalf of `actorId`, in its own transaction.
   * Returns false when the record is gone.
   */
  async writeAsServer(
    collection: CollectionName,
    id: string,
    fields: Record<string, JsonValue>,
    actor: { actorId: string; kind: string; detail?: Record<string, unknown> },
  ): Promise<boolean> {
    return this.em.fork().transactional(async (em) => {
      const written = await this.writer.writeFields(em, {
        recordId: id,
        fields,
        by: actor.actorId,
        deviceId: null,
        now: this.clock.now(),
        check: (current) => !current.deleted && current.collection === collection,
      });
      if (!written) return false;
      const current = written.before;
      await this.audit.record(em, {
        kind: actor.kind,
        actorId: actor.actorId,
        deviceId: null,
        siteId: current.siteId,
        subjectType: collection,
        subjectId: id,
        detail: { fields: Object.keys(fields), ...(actor.detail ?? {}) },
      });
      return true;
    });
  }
}
