// The Outbox as people see it: entries waiting to be sent, and rejected ones their author fixes
// (resubmits with corrected values) or discards (after confirming, with undo). Nothing here
// removes an entry without the person asking for it.
import { validateFields, type CollectionName } from '@fuselight/shared';
import { v7 as uuidv7 } from 'uuid';
import {
  TOMBSTONE,
  getDefaultDb,
  newStoredRecord,
  type FuselightDb,
  type OutboxEntry,
  type StoredRecord,
} from './db';
import { notifyDataChange } from './data-events';
import { tickDeviceClock } from './device-clock';
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

function hasOwn(object: object, key: string): boolean {
  return Object.prototype.hasOwnProperty.call(object, key);
}

function entryFieldNames(entry: OutboxEntry): string[] {
  const names = Object.keys(entry.fields);
  if (entry.deleted !== undefined) names.push(TOMBSTONE);
  return names;
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
    const db = this.db;
    const receipt = await db.transaction('rw', [db.records, db.outbox], async () => {
      const entry = await db.outbox.get(changeId);
      if (!entry) throw new Error('This Outbox entry is no longer there');
      if (entry.state !== 'rejected') {
        throw new Error(
          'Only an edit the server refused can be discarded; this one is still waiting to be sent',
        );
      }
      await db.outbox.delete(changeId);
      const key = [entry.collection, entry.recordId] as unknown as string;
      const record = await db.records.get(key);
      if (record) {
        const others = await db.outbox
          .where('[collection+recordId]')
          .equals([entry.collection, entry.recordId])
          .toArray();
        const stillHeld = new Set(others.flatMap(entryFieldNames));
        const fields = { ...record.fields };
        const serverFields = { ...record.serverFields };
        const pending = new Set(record.pendingFields);
        let deleted = record.deleted;
        for (const name of entryFieldNames(entry)) {
          if (stillHeld.has(name)) continue;
          if (name === TOMBSTONE) {
            deleted = serverFields[TOMBSTONE] === true;
          } else if (hasOwn(serverFields, name)) {
            fields[name] = serverFields[name];
          } else {
            delete fields[name];
          }
          delete serverFields[name];
          pending.delete(name);
        }
        if (record.version === 0 && others.length === 0) {
          await db.records.delete(key);
        } else {
          const next: StoredRecord = {
            ...record,
            fields,
            serverFields,
            deleted,
            pendingFields: [...pending],
          };
          await db.records.put(next);
        }
      }
      return { entry };
    });
    notifyDataChange({
      collections: [receipt.entry.collection],
      recordIds: [receipt.entry.recordId],
      outbox: true,
    });
    return receipt;
  }

  /** Undoes a discard: the entry is back, and its values are on the record again. */
  async undoDiscard(receipt: DiscardReceipt): Promise<void> {
    const db = this.db;
    const { entry } = receipt;
    await db.transaction('rw', [db.records, db.outbox], async () => {
      await db.outbox.put(entry);
      const key = [entry.collection, entry.recordId] as unknown as string;
      const record: StoredRecord =
        (await db.records.get(key)) ??
        newStoredRecord(entry.collection, entry.recordId, entry.updatedAt);
      const fields = { ...record.fields };
      const serverFields = { ...record.serverFields };
      const pending = new Set(record.pendingFields);
      for (const [name, value] of Object.entries(entry.fields)) {
        if (!pending.has(name) && hasOwn(record.fields, name))
          serverFields[name] = record.fields[name];
        pending.add(name);
        fields[name] = value;
      }
      let deleted = record.deleted;
      if (entry.deleted !== undefined) {
        if (!pending.has(TOMBSTONE)) serverFields[TOMBSTONE] = record.deleted;
        pending.add(TOMBSTONE);
        deleted = entry.deleted;
      }
      const next = { ...record, fields, serverFields, deleted, pendingFields: [...pending] };
      await db.records.put(next);
    });
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
    const newId = uuidv7();
    await db.transaction('rw', [db.records, db.outbox, db.meta], async () => {
      const entry = await db.outbox.get(changeId);
      if (!entry || entry.state !== 'rejected') {
        throw new Error('Only an edit the server refused can be fixed and sent again');
      }
      const hlc = await tickDeviceClock(db, ctx.deviceId, ctx.nowMs);
      const seqNow = Number((await db.meta.get('outboxSeq'))?.value ?? 0);
      const last = await db.outbox.orderBy('seq').last();
      const seq = Math.max(seqNow, last?.seq ?? 0) + 1;
      await db.meta.put({ key: 'outboxSeq', value: seq });
      await db.outbox.delete(changeId);
      const replacement: OutboxEntry = {
        ...entry,
        changeId: newId,
        seq,
        hlc,
        fields: validation.fields,
        authorId: ctx.authorId,
        deviceId: ctx.deviceId,
        updatedAt: ctx.nowMs,
        state: 'pending',
        error: null,
        attempts: 0,
      };
      await db.outbox.add(replacement);
      const key = [entry.collection, entry.recordId] as unknown as string;
      const record = await db.records.get(key);
      if (record) {
        const pending = new Set(record.pendingFields);
        const serverFields = { ...record.serverFields };
        const nextFields = { ...record.fields };
        for (const [name, value] of Object.entries(validation.fields)) {
          if (!pending.has(name) && hasOwn(record.fields, name))
            serverFields[name] = record.fields[name];
          pending.add(name);
          nextFields[name] = value;
        }
        const next = {
          ...record,
          fields: nextFields,
          serverFields,
          pendingFields: [...pending],
          updatedAt: ctx.nowMs,
        };
        await db.records.put(next);
      }
    });
    notifyDataChange({ collections: [collection], recordIds: [existing.recordId], outbox: true });
    return newId;
  }
}

export const outboxRepository = new OutboxRepository();
