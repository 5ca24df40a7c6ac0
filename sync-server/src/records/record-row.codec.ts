// The encoding of a batch of record rows for the upsert statement (RecordRepository.upsert): one
// JSON parameter that says each thing once. What most rows share is bound once as its own
// parameters; a row carries its own value only where it differs, and a record's stamps travel
// grouped, each distinct stamp once with the fields it stamps. PostgreSQL spreads them back into
// the field → stamp object the row stores (the SQL in record-repository.ts reads exactly these
// keys), so the stored rows are exactly the records given. A batch of 500 new five-field records
// sends about 200 kB instead of 660 kB for the plain form; parsing the parameter is most of the
// statement's cost in PostgreSQL, and writing it to the socket a large part of the server's.
//
// Keys of an encoded row (EncodedRecordRow), one letter each because every byte is sent:
//
// | key | meaning                         | present                                          |
// | --- | ------------------------------- | ------------------------------------------------ |
// | id  | record id                       | always                                           |
// | v   | record version                  | always                                           |
// | f   | fields (name → value)           | always                                           |
// | g   | stamp groups (EncodedStampGroup)| always (empty array for a record with no stamps) |
// | c   | collection                      | only where it differs from the shared collection |
// | s   | site id                         | only where it differs from the shared site       |
// | d   | deleted (true)                  | only for a deleted record                        |
//
// A stamp group is `[stamp, fields, version?]`:
// - `stamp` is the whole stored stamp object, or its `hlc` alone when the stamp holds exactly
//   hlc, version, by, device and at and its by, device and at are the shared ones (those of the
//   batch's newest stamp: the write being made);
// - `fields` is `null` when the stamp covers exactly the record's fields (a new record), else an
//   object whose keys are the fields (`{ "notes": 0 }`, which PostgreSQL lists faster than an
//   array's elements);
// - `version` follows a short stamp only where it differs from the record's version.
// Each shortening is taken only where it restores the very same stamp, so it never changes what
// is stored. Grouping is by object identity, so two stamps that differ are never merged; stamps
// read back from a row are separate objects and simply travel alone.
import type { JsonValue } from '@fuselight/shared';
import type { StoredStamp } from './stored-record';

/** A record's final state after a batch, as the upsert writes it. */
export interface RecordWrite {
  id: string;
  collection: string;
  siteId: string;
  version: number;
  deleted: boolean;
  fields: Record<string, JsonValue>;
  stamps: Record<string, StoredStamp>;
}

/** What most rows of a batch share, bound once. */
export interface SharedRecordValues {
  collection: string;
  siteId: string;
  /** Who, on which tablet and when, for every stamp sent by its `hlc` alone. */
  stamp: Pick<StoredStamp, 'by' | 'device' | 'at'> | null;
}

/** The fields a stamp group covers: `null` for exactly the record's fields. */
export type EncodedGroupFields = Record<string, 0> | null;

/** `[stamp, fields]`, or `[hlc, fields]` / `[hlc, fields, version]` for a shared-writer stamp. */
export type EncodedStampGroup =
  | [stamp: StoredStamp, fields: EncodedGroupFields]
  | [hlc: string, fields: EncodedGroupFields]
  | [hlc: string, fields: EncodedGroupFields, version: number];

/** One row of the upsert's JSON parameter (see the table above). */
export interface EncodedRecordRow {
  id: string;
  v: number;
  f: Record<string, JsonValue>;
  g: EncodedStampGroup[];
  c?: string;
  s?: string;
  d?: true;
}

export interface EncodedRecordBatch {
  shared: SharedRecordValues;
  rows: EncodedRecordRow[];
}

export function encodeRecordRows(records: readonly RecordWrite[]): EncodedRecordBatch {
  const first = records[0];
  if (!first) return { shared: { collection: '', siteId: '', stamp: null }, rows: [] };
  let newest: StoredStamp | null = null;
  for (const record of records)
    for (const stamp of Object.values(record.stamps))
      if (isPlainStamp(stamp) && (newest === null || stamp.version > newest.version))
        newest = stamp;
  const shared: SharedRecordValues = {
    collection: first.collection,
    siteId: first.siteId,
    stamp: newest && { by: newest.by, device: newest.device, at: newest.at },
  };
  const rows = records.map((record) => {
    const row: EncodedRecordRow = {
      id: record.id,
      v: record.version,
      f: record.fields,
      g: stampGroups(record).map(([stamp, fields]): EncodedStampGroup => {
        const covers = coversExactly(fields, record.fields)
          ? null
          : (Object.fromEntries(fields.map((field) => [field, 0])) as Record<string, 0>);
        if (!isSharedStamp(stamp, shared.stamp)) return [stamp, covers];
        return stamp.version === record.version
          ? [stamp.hlc, covers]
          : [stamp.hlc, covers, stamp.version];
      }),
    };
    if (record.collection !== shared.collection) row.c = record.collection;
    if (record.siteId !== shared.siteId) row.s = record.siteId;
    if (record.deleted) row.d = true;
    return row;
  });
  return { shared, rows };
}

/**
 * The records an encoded batch stands for, as PostgreSQL rebuilds them in the upsert (a stamp is
 * a new object per group; fields the group covers are the record's own keys for `null`).
 */
export function decodeRecordRows(batch: EncodedRecordBatch): RecordWrite[] {
  const { shared } = batch;
  return batch.rows.map((row) => {
    const stamps: Record<string, StoredStamp> = {};
    for (const group of row.g) {
      const [head, covers] = group;
      let stamp: StoredStamp;
      if (typeof head === 'string') {
        if (!shared.stamp) throw new Error(`record ${row.id}: a short stamp with no shared writer`);
        stamp = { hlc: head, version: group[2] ?? row.v, ...shared.stamp };
      } else {
        stamp = head;
      }
      for (const field of Object.keys(covers ?? row.f)) stamps[field] = stamp;
    }
    return {
      id: row.id,
      collection: row.c ?? shared.collection,
      siteId: row.s ?? shared.siteId,
      version: row.v,
      deleted: row.d ?? false,
      fields: row.f,
      stamps,
    };
  });
}

const PLAIN_STAMP_KEYS = 5;

/** Exactly hlc, version, by, device and at, of the types the shortened form restores. */
function isPlainStamp(stamp: StoredStamp): boolean {
  return (
    Object.keys(stamp).length === PLAIN_STAMP_KEYS &&
    typeof stamp.hlc === 'string' &&
    Number.isSafeInteger(stamp.version) &&
    typeof stamp.by === 'string' &&
    typeof stamp.device === 'string' &&
    typeof stamp.at === 'string'
  );
}

function isSharedStamp(stamp: StoredStamp, shared: SharedRecordValues['stamp']): boolean {
  return (
    shared !== null &&
    isPlainStamp(stamp) &&
    stamp.by === shared.by &&
    stamp.device === shared.device &&
    stamp.at === shared.at
  );
}

function coversExactly(fields: readonly string[], values: Record<string, JsonValue>): boolean {
  let count = 0;
  for (const key in values) if (Object.hasOwn(values, key)) count += 1;
  return (
    count === fields.length &&
    fields.every((field) => Object.hasOwn(values, field) && values[field] !== undefined)
  );
}

/** [stamp, fields it stamps] for each distinct stamp object of a record. */
export function stampGroups(record: Pick<RecordWrite, 'stamps'>): [StoredStamp, string[]][] {
  const groups = new Map<StoredStamp, [StoredStamp, string[]]>();
  for (const [field, stamp] of Object.entries(record.stamps)) {
    const group = groups.get(stamp);
    if (group) group[1].push(field);
    else groups.set(stamp, [stamp, [field]]);
  }
  return [...groups.values()];
}
