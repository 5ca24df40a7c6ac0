// Every change of an Outbox entry, and of the pending bookkeeping it keeps on its record
// (`pendingFields`, `serverFields`), is made here and nowhere else:
// - a local edit creates an entry, or is coalesced into the record's latest entry while that one
//   has never been sent (recordLocalEdit);
// - sending claims entries, so nothing later is coalesced into a change the server may already
//   hold (claimForSending);
// - the server's push result decides: accepted (applied/merged/conflict) deletes the entry and
//   clears the pending marks no later entry still holds; rejected keeps the entry, marked, with
//   the server's words, for its author to fix (resubmitRejected) or discard (discardRejected,
//   which rolls the record back to what the server holds; restoreDiscarded undoes that);
// - a pulled record never overwrites a pending field: its value is kept aside in `serverFields`
//   (mergePulled).
// The rules that hold throughout: an edit and its entry are written in ONE Dexie transaction
// (every writer here runs inside the caller's transaction over records, outbox and meta, or opens
// its own); nothing is deleted from the Outbox except on the server's acknowledgement or when the
// person discards a rejected entry; a pull never overwrites a pending field.
import type { CollectionName, PulledRecord, PushResult } from '@fuselight/shared';
import { v7 as uuidv7 } from 'uuid';
import {
  TOMBSTONE,
  newStoredRecord,
  type FuselightDb,
  type OutboxEntry,
  type StoredRecord,
} from './db';

const SEQ_KEY = 'outboxSeq';

function hasOwn(object: object, key: string): boolean {
  return Object.prototype.hasOwnProperty.call(object, key);
}

function recordKey(collection: CollectionName, id: string): string {
  return [collection, id] as unknown as string;
}

/** The field names an entry changes, with `deleted` when it deletes or restores the record. */
export function entryFieldNames(entry: Pick<OutboxEntry, 'fields' | 'deleted'>): string[] {
  const names = Object.keys(entry.fields);
  if (entry.deleted !== undefined) names.push(TOMBSTONE);
  return names;
}

/** The next creation order of an entry (inside a transaction over outbox and meta). */
async function nextSeq(db: FuselightDb): Promise<number> {
  const current = Number((await db.meta.get(SEQ_KEY))?.value ?? 0);
  // The index is unique; a counter lost to a bug must never collide with an existing entry.
  const last = await db.outbox.orderBy('seq').last();
  const next = Math.max(current, last?.seq ?? 0) + 1;
  await db.meta.put({ key: SEQ_KEY, value: next });
  return next;
}

/** Every entry still held for a record (inside a transaction over outbox). */
function entriesOf(db: FuselightDb, collection: CollectionName, recordId: string) {
  return db.outbox.where('[collection+recordId]').equals([collection, recordId]).toArray();
}

/**
 * Marks fields (and the tombstone when `deleted` is given) as pending with their new values; the
 * value the server held for a field is remembered the first time it becomes pending.
 */
export function markPending(
  record: StoredRecord,
  changed: Record<string, unknown>,
  deleted: boolean | undefined,
  updatedAt: number,
): StoredRecord {
  const pending = new Set(record.pendingFields);
  const serverFields = { ...record.serverFields };
  const fields = { ...record.fields };
  for (const [field, value] of Object.entries(changed)) {
    if (!pending.has(field)) {
      if (hasOwn(record.fields, field)) serverFields[field] = record.fields[field];
      pending.add(field);
    }
    fields[field] = value;
  }
  let nextDeleted = record.deleted;
  if (deleted !== undefined) {
    if (!pending.has(TOMBSTONE)) {
      serverFields[TOMBSTONE] = record.deleted;
      pending.add(TOMBSTONE);
    }
    nextDeleted = deleted;
  }
  return {
    ...record,
    fields,
    deleted: nextDeleted,
    pendingFields: [...pending],
    serverFields,
    updatedAt,
  };
}

export interface LocalEdit {
  collection: CollectionName;
  id: string;
  /** The record before the edit (a new, empty one when the edit creates it). */
  base: StoredRecord;
  /** Only the fields whose value differs from `base`. */
  changed: Record<string, unknown>;
  /** true delete, false restore, undefined tombstone untouched. */
  deleted: boolean | undefined;
  /** The edit's stamp from the device clock (ticked in the same transaction). */
  hlc: string;
  authorId: string;
  deviceId: string;
  nowMs: number;
}

/**
 * Writes a local edit: the record with its pending marks, and its Outbox entry: coalesced into
 * the record's latest entry when that one was never sent and is the same author's, device's and
 * base version's; else a new entry. Call inside a transaction over records, outbox and meta.
 */
export async function recordLocalEdit(db: FuselightDb, edit: LocalEdit): Promise<void> {
  const { collection, id, base, changed, deleted, hlc, nowMs } = edit;
  await db.records.put(markPending(base, changed, deleted, nowMs));
  const latest = (
    await db.outbox.where('[collection+recordId]').equals([collection, id]).sortBy('seq')
  ).at(-1);
  const canCoalesce =
    latest !== undefined &&
    latest.state === 'pending' &&
    latest.attempts === 0 &&
    latest.authorId === edit.authorId &&
    latest.deviceId === edit.deviceId &&
    latest.baseVersion === base.version;
  if (canCoalesce) {
    const merged: OutboxEntry = {
      ...latest,
      fields: { ...latest.fields, ...changed },
      hlc,
      updatedAt: nowMs,
    };
    if (deleted !== undefined) merged.deleted = deleted;
    await db.outbox.put(merged);
    return;
  }
  const entry: OutboxEntry = {
    changeId: uuidv7(),
    seq: await nextSeq(db),
    collection,
    recordId: id,
    baseVersion: base.version,
    hlc,
    fields: changed,
    authorId: edit.authorId,
    deviceId: edit.deviceId,
    createdAt: nowMs,
    updatedAt: nowMs,
    state: 'pending',
    error: null,
    attempts: 0,
  };
  if (deleted !== undefined) entry.deleted = deleted;
  await db.outbox.add(entry);
}

/**
 * Takes the next pending entries to send and marks them as sent in the same transaction, so no
 * edit made from now on is coalesced into a change the server may already have committed.
 */
export async function claimForSending(
  db: FuselightDb,
  changeIds: readonly string[],
): Promise<OutboxEntry[]> {
  return db.transaction('rw', db.outbox, async () => {
    const entries = await db.outbox.bulkGet([...changeIds]);
    const live = entries.filter(
      (entry): entry is OutboxEntry => entry !== undefined && entry.state === 'pending',
    );
    await db.outbox.bulkPut(live.map((entry) => ({ ...entry, attempts: entry.attempts + 1 })));
    return live;
  });
}

/**
 * The server now holds `entry`'s values: clears the pending marks of its fields that no entry
 * still in the Outbox holds; a field a later entry still holds keeps its mark, with the entry's
 * value as what the server holds.
 */
function settle(
  record: StoredRecord,
  entry: OutboxEntry,
  remaining: readonly OutboxEntry[],
): Pick<StoredRecord, 'pendingFields' | 'serverFields'> {
  const stillHeld = new Set(remaining.flatMap(entryFieldNames));
  const pending = new Set(record.pendingFields);
  const serverFields = { ...record.serverFields };
  for (const name of entryFieldNames(entry)) {
    if (stillHeld.has(name)) {
      if (name === TOMBSTONE) serverFields[TOMBSTONE] = entry.deleted;
      else serverFields[name] = entry.fields[name];
      continue;
    }
    pending.delete(name);
    delete serverFields[name];
  }
  return { pendingFields: [...pending], serverFields };
}

export interface PushApplySummary {
  accepted: number;
  rejected: number;
  collections: CollectionName[];
}

/** Applies the server's results for a batch of sent entries (matched by changeId). */
export async function applyPushResults(
  db: FuselightDb,
  sent: readonly OutboxEntry[],
  results: readonly PushResult[],
  nowMs: number,
): Promise<PushApplySummary> {
  const byId = new Map(sent.map((entry) => [entry.changeId, entry]));
  const summary: PushApplySummary = { accepted: 0, rejected: 0, collections: [] };
  const touched = new Set<CollectionName>();
  await db.transaction('rw', [db.records, db.outbox], async () => {
    for (const result of results) {
      const entry = byId.get(result.changeId);
      if (!entry) continue;
      const current = await db.outbox.get(entry.changeId);
      if (!current) continue;
      touched.add(entry.collection);
      if (result.status === 'rejected') {
        summary.rejected += 1;
        await db.outbox.put({
          ...current,
          state: 'rejected',
          error: result.error,
          updatedAt: nowMs,
        });
        continue;
      }
      summary.accepted += 1;
      await db.outbox.delete(entry.changeId);
      const key = recordKey(entry.collection, entry.recordId);
      const record = await db.records.get(key);
      if (!record) continue;
      const remaining = await entriesOf(db, entry.collection, entry.recordId);
      const conflicts = new Set([...record.conflicts, ...result.conflicts]);
      // "applied": nobody else changed the record since baseVersion, so the tablet holds the
      // whole of version `result.version`. After "merged" or "conflict" other devices' values
      // are not here yet; the version is adopted from the pull that brings them, so that no new
      // edit claims to have seen values it has not.
      const adopt =
        result.status === 'applied' && record.version === current.baseVersion
          ? Math.max(record.version, result.version)
          : record.version;
      const next: StoredRecord = {
        ...record,
        ...settle(record, current, remaining),
        version: adopt,
        conflicts: [...conflicts],
      };
      await db.records.put(next);
    }
  });
  summary.collections = [...touched];
  return summary;
}

/** Thrown when a rejected-entry action finds the entry gone or not rejected. */
export class OutboxEntryStateError extends Error {
  override readonly name = 'OutboxEntryStateError';
}

/**
 * Removes a rejected entry and puts back what the server holds for its fields (those no other
 * entry still changes). A record made here that never reached the server goes with it. Returns
 * the entry, for restoreDiscarded. Opens its own transaction.
 */
export async function discardRejected(db: FuselightDb, changeId: string): Promise<OutboxEntry> {
  return db.transaction('rw', [db.records, db.outbox], async () => {
    const entry = await db.outbox.get(changeId);
    if (!entry) throw new OutboxEntryStateError('This Outbox entry is no longer there');
    if (entry.state !== 'rejected') {
      throw new OutboxEntryStateError(
        'Only an edit the server refused can be discarded; this one is still waiting to be sent',
      );
    }
    await db.outbox.delete(changeId);
    const key = recordKey(entry.collection, entry.recordId);
    const record = await db.records.get(key);
    if (!record) return entry;
    const others = await entriesOf(db, entry.collection, entry.recordId);
    if (record.version === 0 && others.length === 0) {
      await db.records.delete(key);
      return entry;
    }
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
    await db.records.put({ ...record, fields, serverFields, deleted, pendingFields: [...pending] });
    return entry;
  });
}

/** Undoes a discard: the entry is back, and its values are on the record again, pending. */
export async function restoreDiscarded(db: FuselightDb, entry: OutboxEntry): Promise<void> {
  await db.transaction('rw', [db.records, db.outbox], async () => {
    await db.outbox.put(entry);
    const record: StoredRecord =
      (await db.records.get(recordKey(entry.collection, entry.recordId))) ??
      newStoredRecord(entry.collection, entry.recordId, entry.updatedAt);
    await db.records.put(markPending(record, entry.fields, entry.deleted, record.updatedAt));
  });
}

export interface Resubmission {
  /** The rejected entry's values with the corrections on top, already validated. */
  fields: Record<string, unknown>;
  /** The new change's stamp from the device clock (ticked in the same transaction). */
  hlc: string;
  authorId: string;
  deviceId: string;
  nowMs: number;
}

/**
 * Replaces a rejected entry by a new pending change with corrected values (the server remembers
 * the old change id's rejection, so it cannot be reused), and marks the values pending on the
 * record. Call inside a transaction over records, outbox and meta. Returns the new change id.
 */
export async function resubmitRejected(
  db: FuselightDb,
  changeId: string,
  resubmission: Resubmission,
): Promise<string> {
  const entry = await db.outbox.get(changeId);
  if (!entry || entry.state !== 'rejected') {
    throw new OutboxEntryStateError('Only an edit the server refused can be fixed and sent again');
  }
  const seq = await nextSeq(db);
  await db.outbox.delete(changeId);
  const replacement: OutboxEntry = {
    ...entry,
    changeId: uuidv7(),
    seq,
    hlc: resubmission.hlc,
    fields: resubmission.fields,
    authorId: resubmission.authorId,
    deviceId: resubmission.deviceId,
    updatedAt: resubmission.nowMs,
    state: 'pending',
    error: null,
    attempts: 0,
  };
  await db.outbox.add(replacement);
  const record = await db.records.get(recordKey(entry.collection, entry.recordId));
  if (record) {
    await db.records.put(markPending(record, resubmission.fields, undefined, resubmission.nowMs));
  }
  return replacement.changeId;
}

/**
 * Merges a pulled record into the local one. A field with a pending local edit keeps its local
 * value, and the pulled value is kept aside in `serverFields`. Null when the local record is
 * newer than the pulled one.
 */
export function mergePulled(
  local: StoredRecord | undefined,
  pulled: PulledRecord,
  nowMs: number,
): StoredRecord | null {
  if (local && local.version > pulled.version) return null;
  if (!local || local.pendingFields.length === 0) {
    return {
      collection: pulled.collection,
      id: pulled.id,
      version: pulled.version,
      deleted: pulled.deleted,
      fields: pulled.fields,
      conflicts: pulled.conflicts,
      pendingFields: [],
      serverFields: {},
      updatedAt: nowMs,
    };
  }
  const fields: Record<string, unknown> = { ...pulled.fields };
  const serverFields: Record<string, unknown> = {};
  let deleted = pulled.deleted;
  for (const name of local.pendingFields) {
    if (name === TOMBSTONE) {
      serverFields[TOMBSTONE] = pulled.deleted;
      deleted = local.deleted;
      continue;
    }
    if (hasOwn(pulled.fields, name)) serverFields[name] = pulled.fields[name];
    if (hasOwn(local.fields, name)) fields[name] = local.fields[name];
    else delete fields[name];
  }
  return {
    ...local,
    version: pulled.version,
    deleted,
    fields,
    conflicts: pulled.conflicts,
    serverFields,
    updatedAt: nowMs,
  };
}
