// Turns each Addendum the Review desk's trigger recorded (review_addendum: a dispute resolved on
// a Signed or Countersigned visit) into a synced `addendum` record, so every tablet holding the
// visit pulls it under the signed content. The trigger writes its row in the resolving
// transaction; this service writes the record through the server-change helper, one row per
// transaction (the row locked, skipped if another server process holds it) and notes the
// record's id on the row, so each row is published exactly once.
// The resolve route calls publishAfterResolution once its transaction has committed, before it
// answers. Outside tests a recovery sweep also runs at start and every minute, for rows a crash
// or a failed publish left behind (and rows written before this existed).
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
import { jsonParam, sqlRows } from '../records/sql';
import { SERVER_DEVICE } from '../records/stored-record';
import { recordsByIds, type AddendumRow } from './review-store';
import { createServerRecord } from './server-change';

/** How often the recovery sweep looks for Addenda left unpublished. */
export const ADDENDUM_RECOVERY_SWEEP_MS = 60_000;

type PendingRow = AddendumRow & { site_id: string };

@Injectable()
export class AddendumPublisher implements OnApplicationBootstrap, OnApplicationShutdown {
  private readonly logger = new Logger('AddendumPublisher');
  private timer: NodeJS.Timeout | null = null;
  private running: Promise<unknown> | null = null;

  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(ServerWriter) private readonly writer: ServerWriter,
  ) {}

  onApplicationBootstrap(): void {
    if (this.config.env === 'test') return;
    this.timer = setInterval(() => void this.publishInBackground(), ADDENDUM_RECOVERY_SWEEP_MS);
    this.timer.unref();
    void this.publishInBackground();
  }

  async onApplicationShutdown(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    await this.running;
  }

  private publishInBackground(): Promise<unknown> {
    this.running ??= this.publishPending()
      .catch((error: unknown) => this.logger.error(`publishing Addenda failed: ${String(error)}`))
      .finally(() => {
        this.running = null;
      });
    return this.running;
  }

  /**
   * Publishes the Addendum a just-resolved dispute recorded, if it recorded one (a dispute on a
   * Signed or Countersigned visit). Call it after the resolving transaction has committed. The
   * resolution stands whatever happens here: a failure is logged and the recovery sweep
   * publishes the row later. Returns the id of the record written, or null.
   */
  async publishAfterResolution(disputeId: string): Promise<string | null> {
    try {
      const outcome = await this.publishNext([], disputeId);
      return outcome?.kind === 'written' ? outcome.id : null;
    } catch (error: unknown) {
      this.logger.error(
        `publishing the Addendum of dispute ${disputeId} failed; the recovery sweep retries it: ${String(error)}`,
      );
      return null;
    }
  }

  /**
   * Publishes every unpublished Addendum (up to `limit`); returns the ids of the records written.
   * A row that cannot be published (its visit is gone) is logged and left for a later run.
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

  /** Publishes the oldest unpublished row (of one dispute, when given) in its own transaction. */
  private publishNext(
    skipped: readonly string[],
    disputeId: string | null,
  ): Promise<{ kind: 'written' | 'skipped'; id: string } | null> {
    return this.em.fork().transactional(async (em) => {
      const [row] = await sqlRows<PendingRow>(
        em,
        `select "id", "conflict_id", "visit_id", "collection", "record_id", "site_id", "field", "visit_status",
                "signed_value", "previous_value", "value", "note", "by_user"::text as "by_user", "device",
                "version"::text as "version", "at"
           from "review_addendum"
          where "addendum_record_id" is null
            and (?::uuid is null or "conflict_id" = ?::uuid)
            and not ("id" = any (select jsonb_array_elements_text(?::jsonb)::uuid))
          order by "at", "id" limit 1 for update skip locked`,
        [disputeId, disputeId, jsonParam(skipped)],
      );
      if (!row) return null;
      const recordId = await this.publish(em, row);
      if (recordId === null) return { kind: 'skipped' as const, id: row.id };
      await sqlRows(em, `update "review_addendum" set "addendum_record_id" = ? where "id" = ?`, [
        recordId,
        row.id,
      ]);
      return { kind: 'written' as const, id: recordId };
    });
  }

  private async publish(em: EntityManager, row: PendingRow): Promise<string | null> {
    const visit = (await recordsByIds(em, [row.visit_id])).get(row.visit_id);
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
