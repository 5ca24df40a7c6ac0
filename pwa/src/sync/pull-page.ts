// Reads a pull answer (docs/sync-protocol.md, Pull) without zod's per-record cost. The envelope and
// every record's envelope (collection, uuid id, version, tombstone, field map, stamps,
// conflicts) are checked as strictly as `pullResponseSchema` checks them; what is not walked is
// each field's value, because it came from JSON.parse and is JSON by construction, and the
// per-collection field rules are the server's (it validated every change when it was pushed).
// A malformed page is refused as a whole, before anything is written, with the path of the
// first problem. The records are the parsed objects themselves: no second copy is built.
// A record of a collection, or with a field, that this build does not know is not malformed: it
// was made by a newer build, and is kept as it came (docs/sync-protocol.md, Records a device
// does not know); the page reports what it held that the build does not know.
import { HLC_STAMP_PATTERN, type PullPage, type PulledRecord } from '@fuselight/shared';
import { resetReasonOf, type FullRepullReason } from './full-repull';
import {
  NewerContentCollector,
  THIS_BUILD,
  type BuildSchema,
  type NewerContent,
} from './newer-records';

/** The clinic server sent a pull answer that is not protocol 1; `path` names the first problem. */
export class PullPageError extends Error {
  constructor(
    readonly path: string,
    problem: string,
  ) {
    super(path ? `${path}: ${problem}` : problem);
    this.name = 'PullPageError';
  }
}

/**
 * A pull page as read, with the greatest stamp of its records (for the device clock) and what
 * it held that this build does not know (null: nothing). A record's `collection` may then be a
 * name outside this build's CollectionName.
 */
export interface ReadPullPage extends PullPage {
  greatestStamp: string | null;
  newer: NewerContent | null;
}

export interface ReadPullReset {
  reset: true;
  reason: FullRepullReason;
}
export type ReadPullResponse = ReadPullPage | ReadPullReset;

// A collection name as the server forms them (camelCase words), known to this build or not.
const COLLECTION_NAME_PATTERN = /^[A-Za-z][A-Za-z0-9_-]{0,63}$/;
// The same pattern as zod's z.uuid() (versions 1 to 8, the nil and the max uuid).
const UUID_PATTERN =
  /^([0-9a-fA-F]{8}-[0-9a-fA-F]{4}-[1-8][0-9a-fA-F]{3}-[89abAB][0-9a-fA-F]{3}-[0-9a-fA-F]{12}|00000000-0000-0000-0000-000000000000|ffffffff-ffff-ffff-ffff-ffffffffffff)$/;

function isObject(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

function isVersion(value: unknown): value is number {
  return Number.isSafeInteger(value) && (value as number) >= 0;
}

function isNonEmptyString(value: unknown): value is string {
  return typeof value === 'string' && value.length > 0;
}

/**
 * Checks one record's envelope and returns its greatest stamp (or `greatest` if none is greater).
 * Throws PullPageError naming `records.<index>.<key>`.
 */
function checkRecord(
  value: unknown,
  index: number,
  greatest: string | null,
  newer: NewerContentCollector,
): string | null {
  const at = `records.${index}`;
  if (!isObject(value)) throw new PullPageError(at, 'a record must be an object');
  if (typeof value.collection !== 'string' || !COLLECTION_NAME_PATTERN.test(value.collection)) {
    throw new PullPageError(
      `${at}.collection`,
      `collection must be a name of letters and digits, not ${JSON.stringify(value.collection) ?? 'undefined'}`,
    );
  }
  if (typeof value.id !== 'string' || !UUID_PATTERN.test(value.id)) {
    throw new PullPageError(`${at}.id`, 'id must be a UUID');
  }
  if (!isVersion(value.version)) {
    throw new PullPageError(`${at}.version`, 'version must be a whole number, at least 0');
  }
  if (typeof value.deleted !== 'boolean') {
    throw new PullPageError(`${at}.deleted`, 'deleted must be true or false');
  }
  if (!isObject(value.fields)) throw new PullPageError(`${at}.fields`, 'fields must be an object');
  newer.see(value.collection, value.fields);
  const conflicts = value.conflicts;
  if (!Array.isArray(conflicts)) {
    throw new PullPageError(`${at}.conflicts`, 'conflicts must be a list');
  }
  for (let i = 0; i < conflicts.length; i += 1) {
    if (typeof conflicts[i] !== 'string') {
      throw new PullPageError(`${at}.conflicts.${i}`, 'a conflict must be a field name');
    }
  }
  const stamps = value.stamps;
  if (!isObject(stamps)) throw new PullPageError(`${at}.stamps`, 'stamps must be an object');
  for (const field in stamps) {
    if (!Object.prototype.hasOwnProperty.call(stamps, field)) continue;
    const stamp = stamps[field];
    const stampAt = `${at}.stamps.${field}`;
    if (!isObject(stamp)) throw new PullPageError(stampAt, 'a stamp must be an object');
    if (typeof stamp.hlc !== 'string' || !HLC_STAMP_PATTERN.test(stamp.hlc)) {
      throw new PullPageError(
        `${stampAt}.hlc`,
        'hlc must be a stamp <15-digit wall ms>-<5-digit counter>-<device id>',
      );
    }
    if (!isVersion(stamp.version)) {
      throw new PullPageError(`${stampAt}.version`, 'version must be a whole number, at least 0');
    }
    if (!isNonEmptyString(stamp.by)) throw new PullPageError(`${stampAt}.by`, 'by is required');
    if (!isNonEmptyString(stamp.device)) {
      throw new PullPageError(`${stampAt}.device`, 'device is required');
    }
    if (greatest === null || stamp.hlc > greatest) greatest = stamp.hlc;
  }
  return greatest;
}

/**
 * Reads the parsed JSON of a pull answer: a page (every record checked) or a reset.
 * Throws PullPageError for anything else.
 */
export function readPullResponse(json: unknown, build: BuildSchema = THIS_BUILD): ReadPullResponse {
  if (!isObject(json)) throw new PullPageError('', 'a pull answer must be an object');
  try {
    return readPage(json, build);
  } catch (error) {
    // As pullResponseSchema's union: what is not a page may still be a reset.
    if (json.reset === true) return { reset: true, reason: resetReasonOf(json.reason) };
    throw error;
  }
}

function readPage(json: Record<string, unknown>, build: BuildSchema): ReadPullPage {
  const records = json.records;
  if (!Array.isArray(records)) throw new PullPageError('records', 'records must be a list');
  if (!isVersion(json.cursor)) {
    throw new PullPageError('cursor', 'cursor must be a whole number, at least 0');
  }
  if (typeof json.more !== 'boolean') throw new PullPageError('more', 'more must be true or false');
  let greatest: string | null = null;
  const newer = new NewerContentCollector(build);
  for (let index = 0; index < records.length; index += 1) {
    greatest = checkRecord(records[index], index, greatest, newer);
  }
  return {
    records: records as PulledRecord[],
    cursor: json.cursor,
    more: json.more,
    greatestStamp: greatest,
    newer: newer.result(),
  };
}

export function isReadPullReset(response: ReadPullResponse): response is ReadPullReset {
  return 'reset' in response;
}
