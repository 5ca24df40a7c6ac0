// Every local edit goes through here: it is validated with the shared schemas, then the record,
// its Outbox entry and the device clock are written in ONE Dexie transaction, so an edit is never
// on screen without its entry (docs/sync-protocol.md guarantee 5); the entry and the record's pending
// marks are written by outbox-transitions.ts. The patient search reads the
// database's in-memory patient directory, which follows every committed write by itself.
import {
  jsonEqual,
  validateFields,
  validateRecord,
  type CollectionName,
  type FieldError,
  type RecordFields,
  type RecordFieldsInput,
} from '@fuselight/shared';
import { v7 as uuidv7 } from 'uuid';
import {
  collectionRange,
  getDefaultDb,
  newStoredRecord,
  type FuselightDb,
  type StoredRecord,
} from './db';
import { notifyDataChange } from './data-events';
import { wordStorageError } from './storage-full';
import { tickDeviceClock } from './device-clock';
import { recordLocalEdit } from './outbox-transitions';
import { searchWords } from './patient-terms';

/** Who made an edit, on which tablet, and when (the caller's clock, so tests can control it). */
export interface EditContext {
  authorId: string;
  deviceId: string;
  nowMs: number;
}

/** A record as screens read it: fields typed by the collection's schema. */
export interface LocalRecord<C extends CollectionName = CollectionName> extends Omit<
  StoredRecord,
  'fields' | 'collection'
> {
  collection: C;
  fields: RecordFields<C>;
}

/** An edit the shared schema refuses; `field` names the first offending field. */
export class RecordValidationError extends Error {
  override readonly name = 'RecordValidationError';
  readonly field: string;
  constructor(
    readonly collection: string,
    readonly errors: FieldError[],
  ) {
    super(
      errors
        .map((error) => (error.field ? `${error.field}: ${error.message}` : error.message))
        .join('; '),
    );
    this.field = errors[0]?.field ?? '';
  }
}

/** The edit names a record the tablet does not hold. */
export class RecordNotFoundError extends Error {
  override readonly name = 'RecordNotFoundError';
  constructor(collection: string, id: string) {
    super(`There is no ${collection} record ${id} on this tablet`);
  }
}

export type PlacementField = 'patientId' | 'visitId';

export interface ListFilter {
  /** Include tombstoned records (default false). */
  includeDeleted?: boolean;
  siteId?: string;
  limit?: number;
}

interface Edit {
  fields: Record<string, unknown>;
  /** true delete, false restore, undefined tombstone untouched. */
  deleted?: boolean;
}

function hasOwn(object: object, key: string): boolean {
  return Object.prototype.hasOwnProperty.call(object, key);
}

export class RecordsRepository {
  constructor(private readonly dbSource: FuselightDb | (() => FuselightDb) = getDefaultDb) {}

  get db(): FuselightDb {
    return typeof this.dbSource === 'function' ? this.dbSource() : this.dbSource;
  }

  /**
   * Creates a record (validated as a whole) and returns its id: a new UUID v7, or `options.id`
   * for a record whose id must be the same on every tablet (one Section per visit, so that two
   * tablets starting the same Section offline edit one record and merge field by field).
   */
  async create<C extends CollectionName>(
    collection: C,
    fields: RecordFieldsInput<C>,
    ctx: EditContext,
    options: { id?: string } = {},
  ): Promise<string> {
    const validation = validateRecord(collection, fields);
    if (!validation.ok) throw new RecordValidationError(collection, validation.errors);
    const id = options.id ?? uuidv7();
    await this.writeEdit(collection, id, { fields: validation.fields }, ctx, true);
    return id;
  }

  /** Changes some fields of a record; only fields whose value differs become pending. */
  async update<C extends CollectionName>(
    collection: C,
    id: string,
    fields: Partial<RecordFieldsInput<C>>,
    ctx: EditContext,
  ): Promise<void> {
    const validation = validateFields(collection, fields);
    if (!validation.ok) throw new RecordValidationError(collection, validation.errors);
    await this.writeEdit(collection, id, { fields: validation.fields }, ctx, false);
  }

  /** Deletes a record: a tombstone that syncs like any edit. */
  async remove(collection: CollectionName, id: string, ctx: EditContext): Promise<void> {
    await this.writeEdit(collection, id, { fields: {}, deleted: true }, ctx, false);
  }

  /** Brings a deleted record back. */
  async restore(collection: CollectionName, id: string, ctx: EditContext): Promise<void> {
    await this.writeEdit(collection, id, { fields: {}, deleted: false }, ctx, false);
  }

  async get<C extends CollectionName>(
    collection: C,
    id: string,
  ): Promise<LocalRecord<C> | undefined> {
    return (await this.db.records.get([collection, id] as unknown as string)) as
      LocalRecord<C> | undefined;
  }

  async list<C extends CollectionName>(
    collection: C,
    filter: ListFilter = {},
  ): Promise<LocalRecord<C>[]> {
    // One query of the collection's range, filtered here: the records table is sealed
    // (crypto/sealing-middleware.ts), so it is never walked with a cursor.
    const all = await this.db.records
      .where('[collection+id]')
      .between(...collectionRange(collection), true, true)
      .toArray();
    const kept = all.filter(
      (record) =>
        (filter.includeDeleted === true || !record.deleted) &&
        (filter.siteId === undefined || record.fields.siteId === filter.siteId),
    );
    return (filter.limit === undefined ? kept : kept.slice(0, filter.limit)) as LocalRecord<C>[];
  }

  /** Records of a collection placed on one patient or visit (sections of a visit, visits of a patient). */
  async listByField<C extends CollectionName>(
    collection: C,
    field: PlacementField,
    value: string,
    filter: Pick<ListFilter, 'includeDeleted'> = {},
  ): Promise<LocalRecord<C>[]> {
    const records = await this.db.records
      .where(`[collection+fields.${field}]`)
      .equals([collection, value])
      .toArray();
    return records.filter(
      (record) => filter.includeDeleted === true || !record.deleted,
    ) as LocalRecord<C>[];
  }

  /**
   * Patients whose name words, clinic number or date of birth start with every word typed
   * (e.g. "oka 2016", "2016-04-09", "9/4/2016"): the first word a prefix of some term, each
   * further word a prefix of some term of the same patient; each patient once, in the order of
   * their first matching term. Answered from the database's patient directory in memory (no
   * IndexedDB read once it is loaded; a search before that waits for the load). The records
   * returned are the directory's own: read them, never change them in place.
   */
  async searchPatients(
    query: string,
    options: { limit?: number; siteId?: string } = {},
  ): Promise<LocalRecord<'patient'>[]> {
    const words = searchWords(query);
    if (words.length === 0) return [];
    const search: { limit: number; siteId?: string } = { limit: options.limit ?? 50 };
    if (options.siteId !== undefined) search.siteId = options.siteId;
    return (await this.db.patientDirectory.search(words, search)) as LocalRecord<'patient'>[];
  }

  /** Starts loading the patient directory in the background (a screen that will search). */
  warmPatientSearch(): void {
    this.db.patientDirectory.warm();
  }

  private async writeEdit(
    collection: CollectionName,
    id: string,
    edit: Edit,
    ctx: EditContext,
    creating: boolean,
  ): Promise<void> {
    const db = this.db;
    const written = await db
      .transaction('rw', [db.records, db.outbox, db.meta], async () => {
        const key = [collection, id] as unknown as string;
        const existing = await db.records.get(key);
        if (creating && existing) throw new Error(`A ${collection} record ${id} already exists`);
        if (!creating && !existing) throw new RecordNotFoundError(collection, id);
        const base: StoredRecord = existing ?? newStoredRecord(collection, id, ctx.nowMs);
        const changed: Record<string, unknown> = {};
        for (const [field, value] of Object.entries(edit.fields)) {
          if (creating || !hasOwn(base.fields, field) || !jsonEqual(base.fields[field], value)) {
            changed[field] = value;
          }
        }
        const deleted =
          edit.deleted !== undefined && (creating || edit.deleted !== base.deleted)
            ? edit.deleted
            : undefined;
        if (!creating && Object.keys(changed).length === 0 && deleted === undefined) return false;

        const hlc = await tickDeviceClock(db, ctx.deviceId, ctx.nowMs);
        await recordLocalEdit(db, {
          collection,
          id,
          base,
          changed,
          deleted,
          hlc,
          authorId: ctx.authorId,
          deviceId: ctx.deviceId,
          nowMs: ctx.nowMs,
        });
        return true;
      })
      // Storage full: the whole transaction is undone; the screen says so (storage-full.ts).
      .catch((error: unknown) => {
        throw wordStorageError(error);
      });
    if (written) notifyDataChange({ collections: [collection], recordIds: [id], outbox: true });
  }
}

/** The repository on the tablet's own database. */
export const recordsRepository = new RecordsRepository();
