// Reads synced records for letters, mail and attachments (by id, by placement field), and writes
// the server's own field changes (delivery state, upload time) into them so that tablets receive
// those on their next pull. A server write is stamped like a desk write (device `server`) with an
// HLC past every stamp already on the record, numbered by the same transaction-id versions as a
// push, and audited like any record change.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable } from '@nestjs/common';
import { createClock, receive, tick, type CollectionName, type JsonValue } from '@fuselight/shared';
import { AuditService } from '../audit/audit.service';
import { CLOCK, type Clock } from '../common/clock.provider';
import { lockRecords, upsertRecords } from '../records/record-store';
import { BEGIN_VERSIONED_WRITE_SQL, VersionAllocator } from '../records/record-version';
import { jsonParam, sqlRows } from '../records/sql';
import { recordFromRow, type StoredRecord, type StoredRecordRow } from '../records/stored-record';

export const SERVER_DEVICE = 'server';

const COLUMNS = `"id", "collection", "site_id", "version"::text as "version", "deleted", "fields", "stamps", "created_at"`;

@Injectable()
export class RecordAccess {
  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  /** A live (not deleted) record of the collection, or null. */
  async get(
    collection: CollectionName,
    id: string,
    em: EntityManager = this.em.fork(),
  ): Promise<StoredRecord | null> {
    const [row] = await sqlRows<StoredRecordRow>(
      em,
      `select ${COLUMNS} from "sync_record" where "id" = ?::uuid and "collection" = ? and not "deleted"`,
      [id, collection],
    );
    return row ? recordFromRow(row) : null;
  }

  /** Live records of the collections whose `field` is one of `values`. */
  async findBy(
    collections: readonly CollectionName[],
    field: string,
    values: readonly string[],
    em: EntityManager = this.em.fork(),
  ): Promise<StoredRecord[]> {
    if (values.length === 0 || collections.length === 0) return [];
    const rows = await sqlRows<StoredRecordRow>(
      em,
      `select ${COLUMNS} from "sync_record"
        where "collection" in (select jsonb_array_elements_text(?::jsonb))
          and "fields" ->> ? in (select jsonb_array_elements_text(?::jsonb))
          and not "deleted"
        order by "id"`,
      [jsonParam(collections), field, jsonParam(values)],
    );
    return rows.map(recordFromRow);
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
      const [begin] = await sqlRows<{ base: string }>(em, BEGIN_VERSIONED_WRITE_SQL);
      const versions = VersionAllocator.fromRow(begin);
      const current = (await lockRecords(em, [id])).get(id);
      if (!current || current.deleted || current.collection !== collection) return false;
      const now = this.clock.now();
      let hlc = createClock(SERVER_DEVICE);
      // Past every stamp on the record, so the server's value is the latest write of the field.
      for (const stamp of Object.values(current.stamps))
        hlc = receive(hlc, stamp.hlc, now.getTime());
      const { stamp } = tick(hlc, now.getTime());
      const version = versions.next();
      const stamps = { ...current.stamps };
      for (const field of Object.keys(fields)) {
        stamps[field] = {
          hlc: stamp,
          version,
          by: actor.actorId,
          device: SERVER_DEVICE,
          at: now.toISOString(),
        };
      }
      await upsertRecords(
        em,
        [{ ...current, version, fields: { ...current.fields, ...fields }, stamps }],
        now,
      );
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
