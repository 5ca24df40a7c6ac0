// What a push answer and a pull page do to the tablet's database. The rules:
// - an incoming record never overwrites a field with a pending local edit (its server value is
//   kept aside in `serverFields` instead);
// - after a push, the server's result decides: accepted (applied/merged/conflict) clears the
//   pending marks that no later entry still holds; rejected keeps the entry, marked, with its
//   error, for its author to fix or discard;
// - the pull cursor advances in the same transaction as the last records of its page, so a page
//   is either stored with its cursor or pulled again (guarantee 4 on the device).
import type { CollectionName, PulledRecord, PushResult } from '@fuselight/shared';
import { TOMBSTONE, type FuselightDb, type OutboxEntry, type StoredRecord } from '../data/db';
import { receiveIntoDeviceClock } from '../data/device-clock';

export const CURSOR_KEY = 'pullCursor';
export const LAST_SYNCED_KEY = 'lastSyncedAt';

function hasOwn(object: object, key: string): boolean {
  return Object.prototype.hasOwnProperty.call(object, key);
}

function recordKey(collection: CollectionName, id: string): string {
  return [collection, id] as unknown as string;
}

function entryFieldNames(entry: Pick<OutboxEntry, 'fields' | 'deleted'>): string[] {
  const names = Object.keys(entry.fields);
  if (entry.deleted !== undefined) names.push(TOMBSTONE);
  return names;
}

export async function readCursor(db: FuselightDb): Promise<number> {
  return Number((await db.meta.get(CURSOR_KEY))?.value ?? 0);
}

export async function writeCursor(db: FuselightDb, cursor: number): Promise<void> {
  await db.meta.put({ key: CURSOR_KEY, value: cursor });
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
      const remaining = await db.outbox
        .where('[collection+recordId]')
        .equals([entry.collection, entry.recordId])
        .toArray();
      const stillHeld = new Set(remaining.flatMap(entryFieldNames));
      const pending = new Set(record.pendingFields);
      const serverFields = { ...record.serverFields };
      for (const name of entryFieldNames(current)) {
        if (stillHeld.has(name)) {
          // A later edit still holds the field: the server now holds this entry's value.
          if (name === TOMBSTONE) serverFields[TOMBSTONE] = current.deleted;
          else serverFields[name] = current.fields[name];
          continue;
        }
        pending.delete(name);
        delete serverFields[name];
      }
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
        version: adopt,
        pendingFields: [...pending],
        serverFields,
        conflicts: [...conflicts],
      };
      await db.records.put(next);
    }
  });
  summary.collections = [...touched];
  return summary;
}

export interface PullApplyTimings {
  readMs: number;
  mergeMs: number;
  /** Asking for the records' puts, then waiting until every write of the chunk is done. */
  writeMs: number;
  /** Asking for the cursor and device clock writes with the last chunk (their writes: writeMs). */
  cursorMs: number;
  yieldMs: number;
}

export interface PullApplyOptions {
  deviceId: string;
  /** The page's greatest stamp when the reader already found it (else it is looked for here). */
  greatestStamp?: string | null;
  nowMs: number;
  chunkSize: number;
  /** True when the tablet held nothing before this sync: skips reading existing records. */
  freshDevice: boolean;
  yieldToUi: () => Promise<void>;
  now: () => number;
  onChunk?: (stored: number) => void;
}

/** Merges a pulled record into the local one without touching fields with a pending edit. */
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

function greatestStamp(records: readonly PulledRecord[]): string | null {
  let greatest: string | null = null;
  for (const record of records) {
    for (const stamp of Object.values(record.stamps)) {
      if (greatest === null || stamp.hlc > greatest) greatest = stamp.hlc;
    }
  }
  return greatest;
}

/**
 * Stores one pull page in chunks (one transaction each, yielding to the screen before each, so
 * reading the page and writing its first chunk are separate stretches); the last chunk's
 * transaction also moves the cursor and the device clock. The page has been checked as a whole
 * before this is called; a chunk is written whole or not at all.
 */
export async function applyPullPage(
  db: FuselightDb,
  records: readonly PulledRecord[],
  cursor: number,
  options: PullApplyOptions,
): Promise<{ collections: CollectionName[]; timings: PullApplyTimings }> {
  const timings: PullApplyTimings = {
    readMs: 0,
    mergeMs: 0,
    writeMs: 0,
    cursorMs: 0,
    yieldMs: 0,
  };
  const touched = new Set<CollectionName>();
  const chunkCount = Math.max(1, Math.ceil(records.length / options.chunkSize));
  for (let index = 0; index < chunkCount; index += 1) {
    const chunk = records.slice(index * options.chunkSize, (index + 1) * options.chunkSize);
    const last = index === chunkCount - 1;
    const yieldStarted = options.now();
    await options.yieldToUi();
    timings.yieldMs += options.now() - yieldStarted;
    await db.transaction('rw', [db.records, db.outbox, db.meta], async () => {
      let started = options.now();
      // A fresh tablet with nothing in its Outbox has nothing local to protect.
      const skipRead = options.freshDevice && (await db.outbox.count()) === 0;
      const existing = skipRead
        ? []
        : await db.records.bulkGet(chunk.map((record) => recordKey(record.collection, record.id)));
      timings.readMs += options.now() - started;
      started = options.now();
      const merged: StoredRecord[] = [];
      for (let i = 0; i < chunk.length; i += 1) {
        const pulled = chunk[i] as PulledRecord;
        const next = mergePulled(existing[i], pulled, options.nowMs);
        if (next) {
          merged.push(next);
          touched.add(next.collection);
        }
      }
      timings.mergeMs += options.now() - started;
      // The records and (with the last chunk) the cursor are asked for together and awaited
      // once: IndexedDB carries out a transaction's requests in order anyway. The patient
      // search follows the records by itself when the transaction commits.
      started = options.now();
      const writes: Promise<unknown>[] = [];
      if (merged.length > 0) writes.push(db.records.bulkPut(merged));
      timings.writeMs += options.now() - started;
      started = options.now();
      if (last) {
        const stamp =
          options.greatestStamp === undefined ? greatestStamp(records) : options.greatestStamp;
        if (stamp !== null) {
          writes.push(
            receiveIntoDeviceClock(db, options.deviceId, stamp, Math.floor(options.nowMs)),
          );
        }
        writes.push(writeCursor(db, cursor));
      }
      timings.cursorMs += options.now() - started;
      started = options.now();
      await Promise.all(writes);
      timings.writeMs += options.now() - started;
    });
    options.onChunk?.(chunk.length);
  }
  return { collections: [...touched], timings };
}
