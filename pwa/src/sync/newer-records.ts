// Records a device does not know (docs/sync-protocol.md): a pulled record of a collection this
// build has no schema for, or with a field its collection's schema does not have, was made by a
// newer build. The tablet stores it exactly as it came (the records table holds any collection;
// screens read by collection and never meet it), keeps pulling, and notes in `meta` what it
// could not read, so the sync bar and the You screen can say that an update is available. The
// note is reviewed against the build that opens the database: after the app updates, what the
// new build knows drops out of it, and the records are already there to be read.
import { COLLECTIONS, collectionLabel, isCollectionName, recordSchemas } from '@fuselight/shared';
import type { FuselightDb } from '../data/db';

export const NEWER_RECORDS_KEY = 'newerRecords';

/** What a build knows of the record schemas (this build's, or another one in tests). */
export interface BuildSchema {
  knowsCollection(collection: string): boolean;
  knowsField(collection: string, field: string): boolean;
}

/** A build that knows `collections`, each with the given field names. */
export function buildSchemaOf(
  collections: Readonly<Record<string, readonly string[]>>,
): BuildSchema {
  const fields = new Map(
    Object.entries(collections).map(([collection, names]) => [collection, new Set(names)]),
  );
  return {
    knowsCollection: (collection) => fields.has(collection),
    knowsField: (collection, field) => fields.get(collection)?.has(field) === true,
  };
}

/** The record schemas this build was made with (shared/src/schemas/registry.ts). */
export const THIS_BUILD: BuildSchema = buildSchemaOf(
  Object.fromEntries(
    COLLECTIONS.map((collection) => [collection, Object.keys(recordSchemas[collection].shape)]),
  ),
);

/** What a pull brought that the build does not know, as names. */
export interface NewerContent {
  /** Collections the build does not know. */
  collections: string[];
  /** Per known collection, the field names its schema does not have. */
  fields: Record<string, string[]>;
}

/** The note kept in `meta`: what was received and not known, since when. */
export interface NewerRecordsNote extends NewerContent {
  firstSeenAt: number;
}

/** Collects unknown collections and fields of records as a page is read. */
export class NewerContentCollector {
  private readonly collections = new Set<string>();
  private readonly fields = new Map<string, Set<string>>();

  constructor(private readonly build: BuildSchema) {}

  /** Looks at one record's collection and field names. */
  see(collection: string, recordFields: Record<string, unknown>): void {
    if (!this.build.knowsCollection(collection)) {
      this.collections.add(collection);
      return;
    }
    for (const field in recordFields) {
      if (!Object.prototype.hasOwnProperty.call(recordFields, field)) continue;
      if (this.build.knowsField(collection, field)) continue;
      let names = this.fields.get(collection);
      if (!names) {
        names = new Set();
        this.fields.set(collection, names);
      }
      names.add(field);
    }
  }

  /** Null when every record was fully known. */
  result(): NewerContent | null {
    if (this.collections.size === 0 && this.fields.size === 0) return null;
    return {
      collections: [...this.collections].sort(),
      fields: Object.fromEntries(
        [...this.fields].map(([collection, names]) => [collection, [...names].sort()]),
      ),
    };
  }
}

function union(a: readonly string[], b: readonly string[]): string[] {
  return [...new Set([...a, ...b])].sort();
}

function isStringList(value: unknown): value is string[] {
  return Array.isArray(value) && value.every((item) => typeof item === 'string');
}

function isNote(value: unknown): value is NewerRecordsNote {
  if (typeof value !== 'object' || value === null) return false;
  const note = value as Record<string, unknown>;
  const fields = note.fields;
  return (
    typeof note.firstSeenAt === 'number' &&
    isStringList(note.collections) &&
    typeof fields === 'object' &&
    fields !== null &&
    Object.values(fields).every(isStringList)
  );
}

/** Adds a page's newer content to the note (inside the caller's transaction over meta). */
export async function noteNewerContent(
  db: FuselightDb,
  content: NewerContent,
  nowMs: number,
): Promise<NewerRecordsNote> {
  const stored = (await db.meta.get(NEWER_RECORDS_KEY))?.value;
  const current: NewerRecordsNote = isNote(stored)
    ? stored
    : { collections: [], fields: {}, firstSeenAt: nowMs };
  const fields: Record<string, string[]> = { ...current.fields };
  for (const [collection, names] of Object.entries(content.fields)) {
    fields[collection] = union(fields[collection] ?? [], names);
  }
  const next: NewerRecordsNote = {
    collections: union(current.collections, content.collections),
    fields,
    firstSeenAt: current.firstSeenAt,
  };
  await db.meta.put({ key: NEWER_RECORDS_KEY, value: next });
  return next;
}

/** What of a note the build still does not know; null when it knows all of it. */
export function stillUnknown(note: NewerRecordsNote, build: BuildSchema): NewerRecordsNote | null {
  const collections = note.collections.filter((collection) => !build.knowsCollection(collection));
  const fields: Record<string, string[]> = {};
  for (const [collection, names] of Object.entries(note.fields)) {
    // A collection is known here, since it was known when noted (a build never forgets one).
    const unknown = names.filter((field) => !build.knowsField(collection, field));
    if (unknown.length > 0) fields[collection] = unknown;
  }
  if (collections.length === 0 && Object.keys(fields).length === 0) return null;
  return { collections, fields, firstSeenAt: note.firstSeenAt };
}

/**
 * Reads the note as this build sees it: what the build knows now (after an update) is dropped
 * from it, and a note left with nothing is removed. Null: nothing newer is held.
 */
export async function reviewNewerRecords(
  db: FuselightDb,
  build: BuildSchema = THIS_BUILD,
): Promise<NewerRecordsNote | null> {
  return db.transaction('rw', db.meta, async () => {
    const stored = (await db.meta.get(NEWER_RECORDS_KEY))?.value;
    if (stored === undefined) return null;
    const note = isNote(stored) ? stillUnknown(stored, build) : null;
    if (note === null) await db.meta.delete(NEWER_RECORDS_KEY);
    else if (JSON.stringify(note) !== JSON.stringify(stored)) {
      await db.meta.put({ key: NEWER_RECORDS_KEY, value: note });
    }
    return note;
  });
}

/** The short words of the sync bar. */
export const UPDATE_AVAILABLE_SHORT = 'Update available';

function plural(count: number, one: string, many: string): string {
  return `${count} ${count === 1 ? one : many}`;
}

/** In words, for the You screen and the sync bar's label; null when nothing newer is held. */
export function describeNewerRecords(note: NewerRecordsNote | null): string | null {
  if (!note) return null;
  const parts: string[] = [];
  if (note.collections.length > 0) {
    parts.push(plural(note.collections.length, 'kind of record', 'kinds of record'));
  }
  const withFields = Object.keys(note.fields)
    .filter(isCollectionName)
    .map((collection) => collectionLabel(collection));
  if (withFields.length > 0) parts.push(`new details in ${withFields.join(', ')}`);
  const what = parts.length > 0 ? parts.join(' and ') : 'records';
  return (
    `An update of Fuselight is available. This tablet has received ${what} from a newer ` +
    'version of the app that this version cannot show yet. They are kept exactly as they came ' +
    'and nothing is lost; syncing goes on. Update the app to see them.'
  );
}
