// What a push answer and a pull page do to the tablet's database. The rules:
// - an edit and its Outbox entry are written in one Dexie transaction, and nothing is deleted
//   from the Outbox except on the server's acknowledgement (or a person discarding an entry the
//   server refused);
// - an incoming record never overwrites a field with a pending local edit (its server value is
//   kept aside in `serverFields` instead);
// - after a push, the server's result decides: accepted (applied/merged/conflict) clears the
//   pending marks that no later entry still holds; rejected keeps the entry, marked, with its
//   error, for its author to fix or discard;
// - the pull cursor advances in the same transaction as the last records of its page, so a page
//   is either stored with its cursor or pulled again (guarantee 4 on the device);
// - a record of a collection or with fields this build does not know is stored as it came, and
//   noted (newer-records.ts) in the same transaction as the cursor.
// Every Outbox transition and pending mark is written by data/outbox-transitions.ts (the push
// result, claiming for sending, the merge of a pulled record); this file stores pull pages.
import type { CollectionName, PulledRecord } from '@fuselight/shared';
import type { FuselightDb, StoredRecord } from '../data/db';
import { receiveIntoDeviceClock } from '../data/device-clock';
import { mergePulled } from '../data/outbox-transitions';
import { removedSites } from '../data/site-scope';
import { noteNewerContent, type NewerContent } from './newer-records';

export {
  applyPushResults,
  claimForSending,
  mergePulled,
  type PushApplySummary,
} from '../data/outbox-transitions';

export const CURSOR_KEY = 'pullCursor';
export const LAST_SYNCED_KEY = 'lastSyncedAt';

function recordKey(collection: CollectionName, id: string): string {
  return [collection, id] as unknown as string;
}

export async function readCursor(db: FuselightDb): Promise<number> {
  return Number((await db.meta.get(CURSOR_KEY))?.value ?? 0);
}

export async function writeCursor(db: FuselightDb, cursor: number): Promise<void> {
  await db.meta.put({ key: CURSOR_KEY, value: cursor });
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
  /** What the page held that this build does not know (pull-page.ts), noted with the cursor. */
  newer?: NewerContent | null;
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
      // A site this tablet no longer serves (data/site-scope.ts): a session that began before
      // the change may still be sent its records for a few minutes; they are not stored.
      const removed = await removedSites(db);
      timings.readMs += options.now() - started;
      started = options.now();
      const merged: StoredRecord[] = [];
      for (let i = 0; i < chunk.length; i += 1) {
        const pulled = chunk[i] as PulledRecord;
        if (removed.size > 0 && removed.has(pulled.fields.siteId as string)) continue;
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
        if (options.newer) writes.push(noteNewerContent(db, options.newer, options.nowMs));
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
