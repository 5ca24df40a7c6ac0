// The Outbox as people see it: entries waiting to be sent, and rejected ones their author fixes
// (resubmits with corrected values) or discards (after confirming, with undo). Nothing here
// removes an entry without the person asking for it. The transitions themselves (and the record's
// pending marks they keep) are outbox-transitions.ts.
import { validateFields, type CollectionName } from '@fuselight/shared';
import { getDefaultDb, type FuselightDb, type OutboxEntry } from './db';
import { notifyDataChange } from './data-events';
import { tickDeviceClock } from './device-clock';
import { wordStorageError } from './storage-full';
import { discardRejected, resubmitRejected, restoreDiscarded } from './outbox-transitions';
import { RecordValidationError, type EditContext } from './records-repository';

export interface OutboxCounts {
  total: number;
  pending: number;
  rejected: number;
}

/** What a discard took away, so that it can be undone. */
export interface DiscardReceipt {
  entry: OutboxEntry;
}

export class OutboxRepository {
  constructor(private readonly dbSource: FuselightDb | (() => FuselightDb) = getDefaultDb) {}

  get db(): FuselightDb {
    return typeof this.dbSource === 'function' ? this.dbSource() : this.dbSource;
  }

  /** Every entry, oldest first (the order they are sent in). */
  async listEntries(): Promise<OutboxEntry[]> {
    return this.db.outbox.orderBy('seq').toArray();
  }

  async counts(): Promise<OutboxCounts> {
    const db = this.db;
    const [total, rejected] = await Promise.all([
      db.outbox.count(),
      db.outbox.where('state').equals('rejected').count(),
    ]);
    return { total, pending: total - rejected, rejected };
  }

  async get(changeId: string): Promise<OutboxEntry | undefined> {
    return this.db.outbox.get(changeId);
  }

  /**
   * Removes a rejected entry and puts back what the server holds for its fields (those no other
   * entry still changes). A record made here that never reached the server goes with it.
   */
  async discard(changeId: string): Promise<DiscardReceipt> {
    const entry = await discardRejected(this.db, changeId);
    notifyDataChange({
      collections: [entry.collection],
      recordIds: [entry.recordId],
      outbox: true,
    });
    return { entry };
  }

  /** Undoes a discard: the entry is back, and its values are on the record again. */
  async undoDiscard(receipt: DiscardReceipt): Promise<void> {
    const { entry } = receipt;
    await restoreDiscarded(this.db, entry);
    notifyDataChange({
      collections: [entry.collection],
      recordIds: [entry.recordId],
      outbox: true,
    });
  }

  /**
   * Fixes a rejected entry: its values with the corrections on top go out again as a new change
   * (the server remembers the old change id's rejection, so it cannot be reused).
   */
  async resubmit(
    changeId: string,
    corrections: Record<string, unknown>,
    ctx: EditContext,
  ): Promise<string> {
    const db = this.db;
    const existing = await db.outbox.get(changeId);
    if (!existing) throw new Error('This Outbox entry is no longer there');
    const collection: CollectionName = existing.collection;
    const fields = { ...existing.fields, ...corrections };
    const validation = validateFields(collection, fields);
    if (!validation.ok) throw new RecordValidationError(collection, validation.errors);
    const newId = await db
      .transaction('rw', [db.records, db.outbox, db.meta], async () => {
        const hlc = await tickDeviceClock(db, ctx.deviceId, ctx.nowMs);
        return resubmitRejected(db, changeId, {
          fields: validation.fields,
          hlc,
          authorId: ctx.authorId,
          deviceId: ctx.deviceId,
          nowMs: ctx.nowMs,
        });
      })
      .catch((error: unknown) => {
        throw wordStorageError(error);
      });
    notifyDataChange({ collections: [collection], recordIds: [existing.recordId], outbox: true });
    return newId;
  }
}

export const outboxRepository = new OutboxRepository();
