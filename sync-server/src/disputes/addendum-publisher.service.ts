// Turns each Addendum (review_addendum: a dispute resolved on a Signed or Countersigned visit,
// recorded by the resolution in its own transaction) into a synced `addendum` record, so every
// tablet holding the visit pulls it under the signed content. It writes the record through the
// server-change helper, one row per transaction (the row locked, skipped if another server
// process holds it) and notes the record's id on the row, so each row is published exactly once.
// The resolution calls publishAfterResolution once its transaction has committed, before it
// answers. Outside tests one recovery sweep runs at start, for rows a crash between a
// resolution's commit and its publishing left behind; nothing polls after that (a publish that
// fails while the server runs is logged, and the next start publishes it).
import { EntityManager } from '@mikro-orm/postgresql';
import {
  Inject,
  Injectable,
  Logger,
  type OnApplicationBootstrap,
  type OnApplicationShutdown,
} from '@nestjs/common';
import { isCollectionName, type JsonValue } from '@fuselight/shared';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { ServerWriter } from '../records/server-writer';
import { RecordStore } from '../records/record-store';
import { createServerRecord } from '../records/server-change';
import { SERVER_DEVICE } from '../records/stored-record';
import { AddendumStore, type PendingAddendumRow } from './addendum-store';

@Injectable()
export class AddendumPublisher implements OnApplicationBootstrap, OnApplicationShutdown {
  private readonly logger = new Logger('AddendumPublisher');
  private running: Promise<unknown> | null = null;

  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(ServerWriter) private readonly writer: ServerWriter,
    @Inject(RecordStore) private readonly records: RecordStore,
    @Inject(AddendumStore) private readonly addenda: AddendumStore,
  ) {}

  /** The recovery sweep, once per start (not in tests, which call publishPending themselves). */
  onApplicationBootstrap(): void {
    if (this.config.env === 'test') return;
    void this.publishInBackground();
  }

  async onApplicationShutdown(): Promise<void> {
    await this.running;
  }

  private publishInBackground(): Promise<unknown> {
    // Every row left behind, however many: nothing runs again until the next start.
    this.running ??= this.publishPending(Number.POSITIVE_INFINITY)
      .catch((error: unknown) => this.logger.error(`publishing Addenda failed: ${String(error)}`))
      .finally(() => {
        this.running = null;
      });
    return this.running;
  }

  /**
   * Publishes the Addendum a resolution recorded (a dispute on a Signed or Countersigned visit).
   * Call it after the resolving transaction has committed. The resolution stands whatever
   * happens here: a failure is logged and the next start's recovery sweep publishes the row.
   * Returns the id of the record written, or null.
   */
  async publishAfterResolution(addendumId: string, disputeId: string): Promise<string | null> {
    try {
      const outcome = await this.publishNext([], addendumId);
      return outcome?.kind === 'written' ? outcome.id : null;
    } catch (error: unknown) {
      this.logger.error(
        `publishing the Addendum of dispute ${disputeId} failed; the recovery sweep at the next start publishes it: ${String(error)}`,
      );
      return null;
    }
  }

  /**
   * Publishes every unpublished Addendum (up to `limit`); returns the ids of the records written.
   * A row that cannot be published (its visit or author is not on the server) is logged and left
   * for the next start's sweep.
   */
  async publishPending(limit = 100): Promise<string[]> {
    const written: string[] = [];
    const skipped: string[] = [];
    while (written.length < limit) {
      const outcome = await this.publishNext(skipped, null);
      if (outcome === null) break;
      (outcome.kind === 'skipped' ? skipped : written).push(outcome.id);
    }
    return written;
  }

  /** Publishes the oldest unpublished row (the given one, when given) in its own transaction. */
  private publishNext(
    skipped: readonly string[],
    addendumId: string | null,
  ): Promise<{ kind: 'written' | 'skipped'; id: string } | null> {
    return this.em.fork().transactional(async (em) => {
      const row = await this.addenda.lockNextUnpublished(em, { addendumId, skipped });
      if (!row) return null;
      const recordId = await this.publish(em, row);
      if (recordId === null) return { kind: 'skipped' as const, id: row.id };
      await this.addenda.markPublished(em, row.id, recordId);
      return { kind: 'written' as const, id: recordId };
    });
  }

  private async publish(em: EntityManager, row: PendingAddendumRow): Promise<string | null> {
    const visit = await this.records.byId(em, row.visit_id);
    const patientId = visit?.fields.patientId;
    if (!visit || visit.collection !== 'visit' || typeof patientId !== 'string' || !row.by_user) {
      this.logger.warn(
        `Addendum ${row.id} (dispute ${row.conflict_id}) waits: its visit or author is not on the server`,
      );
      return null;
    }
    const at = new Date(row.at);
    const fields: Record<string, JsonValue> = {
      siteId: visit.siteId,
      visitId: visit.id,
      patientId,
      authorId: row.by_user,
      writtenAt: at.toISOString(),
      text: row.note,
      amendedRecordId: row.record_id,
      amendedField: row.field,
      // What the signature covered; the value just before the resolution if none is known.
      previousValue: row.signed_value ?? row.previous_value,
      newValue: row.value,
      conflictId: row.conflict_id,
    };
    if (isCollectionName(row.collection)) fields.amendedCollection = row.collection;
    const record = await createServerRecord(this.writer, em, {
      collection: 'addendum',
      recordId: this.ids.uuid(),
      siteId: visit.siteId,
      fields,
      by: row.by_user,
      deviceId: row.device && row.device !== SERVER_DEVICE ? row.device : null,
      now: this.clock.now(),
    });
    return record.id;
  }
}
