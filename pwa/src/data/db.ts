// The tablet's IndexedDB, through Dexie: the device's source of truth. Components never import
// this file; they use the repositories beside it. Every schema change is a new db.version(n)
// with an upgrade that migrates what is there (never dropping the outbox).
import Dexie, { type EntityTable, type Transaction } from 'dexie';
import type { CollectionName } from '@fuselight/shared';

/** Name of the tombstone pseudo-field in `pendingFields` and `serverFields`. */
export const TOMBSTONE = 'deleted';

/** A synced record as the tablet holds it: the server's envelope plus local bookkeeping. */
export interface StoredRecord {
  collection: CollectionName;
  id: string;
  /** Server version of the last pulled or acknowledged state (0 for a record made here). */
  version: number;
  deleted: boolean;
  fields: Record<string, unknown>;
  /** Field names with an open dispute on the server. */
  conflicts: string[];
  /** Field names (and `deleted`) edited here and not yet acknowledged by the server. */
  pendingFields: string[];
  /**
   * The last value the server is known to hold for each pending field (absent key: the server
   * has no value). Pulls update it instead of overwriting a pending edit, so discarding a
   * rejected edit can restore what the server holds. Empty when nothing is pending.
   */
  serverFields: Record<string, unknown>;
  updatedAt: number;
}

/** @deprecated name kept for the first consumers; use StoredRecord. */
export type LocalRecordRow = StoredRecord;

export type OutboxState = 'pending' | 'rejected';

/** One queued change of the Outbox, written in the same transaction as the edit. */
export interface OutboxEntry {
  changeId: string;
  /** Order of creation on this device (pushes go in this order). */
  seq: number;
  collection: CollectionName;
  recordId: string;
  baseVersion: number;
  hlc: string;
  fields: Record<string, unknown>;
  /** true: delete; false: restore; undefined: the tombstone is untouched. */
  deleted?: boolean;
  /** The person who made the edit; it is pushed under their session. */
  authorId: string;
  deviceId: string;
  createdAt: number;
  updatedAt: number;
  /** 'pending' until acknowledged; 'rejected' keeps it visible for its author to fix or discard. */
  state: OutboxState;
  error: string | null;
  /**
   * How many times it was put on the wire. Once sent, the server may have committed it even
   * if the reply was lost, so no later edit is ever coalesced into it.
   */
  attempts: number;
}

export interface MetaEntry {
  key: string;
  value: unknown;
}

/** A patient's search terms (name words, clinic number, date of birth), lower case. */
export interface PatientSearchRow {
  id: string;
  siteId: string | null;
  terms: string[];
}

export class FuselightDb extends Dexie {
  records!: EntityTable<StoredRecord, 'id'>;
  outbox!: EntityTable<OutboxEntry, 'changeId'>;
  meta!: EntityTable<MetaEntry, 'key'>;
  patientSearch!: EntityTable<PatientSearchRow, 'id'>;

  constructor(name = 'fuselight') {
    super(name);
    this.version(1).stores({
      records: '[collection+id], collection, id, version, updatedAt',
      outbox: 'changeId, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
    });
    this.version(2)
      .stores({
        records:
          '[collection+id], collection, id, version, updatedAt, [collection+fields.visitId], [collection+fields.patientId]',
        outbox: 'changeId, &seq, [collection+recordId], state, authorId, createdAt',
        meta: 'key',
        patientSearch: 'id, *terms, siteId',
      })
      .upgrade(upgradeToVersion2);
    // Version 3 keeps only the indexes something reads: a first sync writes every record once
    // per index, and `id`, `version`, `updatedAt` and the search rows' `siteId` were never
    // queried, while `collection` is served by the primary key's own range. Dropping an index
    // moves no data: every record, Outbox entry and search row stays as it is.
    this.version(3).stores({
      records: '[collection+id], [collection+fields.visitId], [collection+fields.patientId]',
      outbox: 'changeId, &seq, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
      patientSearch: 'id, *terms',
    });
  }
}

/** The records of one collection, by the primary key's [collection+id] range (no index). */
export function collectionRange(collection: string): [[string, string], [string, string]] {
  return [
    [collection, Dexie.minKey as unknown as string],
    [collection, Dexie.maxKey as unknown as string],
  ];
}

/**
 * Version 1 entries had no creation order, no device id and wrote `deleted: false` for every
 * edit (which on the wire would restore a deleted record). Every entry is kept: it gets a
 * sequence in its creation order, and `deleted: false` becomes "tombstone untouched".
 */
async function upgradeToVersion2(tx: Transaction): Promise<void> {
  const outbox = tx.table('outbox');
  const entries = (await outbox.toArray()) as Array<Record<string, unknown>>;
  entries.sort(
    (a, b) =>
      Number(a.createdAt ?? 0) - Number(b.createdAt ?? 0) ||
      String(a.changeId).localeCompare(String(b.changeId)),
  );
  let seq = 0;
  for (const entry of entries) {
    seq += 1;
    const hlc = String(entry.hlc ?? '');
    const migrated: Record<string, unknown> = {
      ...entry,
      seq,
      deviceId:
        typeof entry.deviceId === 'string' ? entry.deviceId : hlc.split('-').slice(2).join('-'),
      updatedAt: entry.updatedAt ?? entry.createdAt ?? 0,
      state: entry.state === 'rejected' ? 'rejected' : 'pending',
      error: entry.error ?? null,
      attempts: typeof entry.attempts === 'number' ? entry.attempts : 0,
      fields: entry.fields ?? {},
    };
    if (entry.deleted !== true) delete migrated.deleted;
    await outbox.put(migrated);
  }
  await tx.table('meta').put({ key: 'outboxSeq', value: seq });
  await tx
    .table('records')
    .toCollection()
    .modify((record: Record<string, unknown>) => {
      record.serverFields ??= {};
      record.pendingFields ??= [];
      record.conflicts ??= [];
    });
  const patients = (await tx
    .table('records')
    .where('[collection+id]')
    .between(...collectionRange('patient'), true, true)
    .toArray()) as StoredRecord[];
  await tx.table('patientSearch').bulkPut(patients.map(patientSearchRow));
}

function normalise(value: string): string {
  return value
    .toLocaleLowerCase()
    .normalize('NFD')
    .replace(/\p{Diacritic}/gu, '')
    .replace(/['’]/gu, '');
}

/** Name words, each whole and split at hyphens ("obrien-lowe", "obrien", "lowe"). */
function nameTerms(value: unknown): string[] {
  if (typeof value !== 'string') return [];
  return normalise(value)
    .split(/[\s,]+/u)
    .filter((word) => word.length > 0)
    .flatMap((word) => [
      word,
      ...word.split('-').filter((part) => part.length > 0 && part !== word),
    ]);
}

const TYPED_ISO_DATE = /^(\d{4})-(\d{1,2})(?:-(\d{1,2}))?$/;
const TYPED_DAY_FIRST_DATE = /^(\d{1,2})[/.](\d{1,2})[/.](\d{4})$/;

/**
 * A typed date of birth as the YYYY-MM-DD prefix the index holds ("2016-4-9", "9/4/2016" and
 * "09.04.2016" → "2016-04-09"; "2016-4" → "2016-04"); any other word as it is. A date is one
 * term: its hyphens are not word breaks. A one-digit day after a two-digit month is left as
 * typed, a prefix of the day still being typed ("2016-04-1" finds the 10th to the 19th).
 */
function dateTerm(word: string): string {
  const dayFirst = TYPED_DAY_FIRST_DATE.exec(word);
  if (dayFirst) {
    const [, d = '', m = '', y = ''] = dayFirst;
    return `${y}-${m.padStart(2, '0')}-${d.padStart(2, '0')}`;
  }
  const iso = TYPED_ISO_DATE.exec(word);
  if (!iso) return word;
  const [, y = '', m = '', d] = iso;
  const month = m.padStart(2, '0');
  if (d === undefined) return `${y}-${month}`;
  return `${y}-${month}-${m.length === 1 ? d.padStart(2, '0') : d}`;
}

/** Normalises what a person types into the search box into the same form as the terms. */
export function searchWords(query: string): string[] {
  return normalise(query)
    .split(/[\s,]+/u)
    .filter((word) => word.length > 0)
    .map(dateTerm);
}

export function patientSearchRow(record: StoredRecord): PatientSearchRow {
  const fields = record.fields;
  const terms = new Set<string>();
  if (!record.deleted) {
    for (const word of [...nameTerms(fields.givenName), ...nameTerms(fields.familyName)]) {
      terms.add(word);
    }
    const clinicNumber = typeof fields.clinicNumber === 'string' ? fields.clinicNumber : '';
    if (clinicNumber) terms.add(clinicNumber.toLocaleLowerCase().replace(/\s+/g, ''));
    if (typeof fields.dateOfBirth === 'string') terms.add(fields.dateOfBirth);
  }
  return {
    id: record.id,
    siteId: typeof fields.siteId === 'string' ? fields.siteId : null,
    terms: [...terms],
  };
}

export const DEXIE_SCHEMA_VERSION = 3;

let defaultDb: FuselightDb | null = null;

/** The tablet's database (opened lazily; tests may replace it with setDefaultDb). */
export function getDefaultDb(): FuselightDb {
  defaultDb ??= new FuselightDb();
  return defaultDb;
}

export function setDefaultDb(db: FuselightDb | null): void {
  defaultDb = db;
}
