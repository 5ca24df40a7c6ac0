// Every local edit goes through here: it is validated with the shared schemas, then the record,
// its Outbox entry, the device clock and the patient search terms are written in ONE Dexie
// transaction, so an edit is never on screen without its entry (sync-protocol.md guarantee 5).
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
  TOMBSTONE,
  collectionRange,
  getDefaultDb,
  patientSearchRow,
  searchWords,
  type FuselightDb,
  type OutboxEntry,
  type StoredRecord,
} from './db';
import { notifyDataChange } from './data-events';
import { tickDeviceClock } from './device-clock';

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

/** Search rows read at a time while checking the second and later typed words. */
const SEARCH_ROW_CHUNK = 200;

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

const SEQ_KEY = 'outboxSeq';

async function nextSeq(db: FuselightDb): Promise<number> {
  const current = Number((await db.meta.get(SEQ_KEY))?.value ?? 0);
  // The index is unique; a counter lost to a bug must never collide with an existing entry.
  const last = await db.outbox.orderBy('seq').last();
  const next = Math.max(current, last?.seq ?? 0) + 1;
  await db.meta.put({ key: SEQ_KEY, value: next });
  return next;
}

function hasOwn(object: object, key: string): boolean {
  return Object.prototype.hasOwnProperty.call(object, key);
}

/**
 * Applies an edit to the stored record: changed fields become pending, and the value the server
 * held for a field is remembered the first time it becomes pending.
 */
function applyEditToRecord(
  record: StoredRecord,
  changed: Record<string, unknown>,
  deleted: boolean | undefined,
  nowMs: number,
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
    updatedAt: nowMs,
  };
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
    let query = this.db.records
      .where('[collection+id]')
      .between(...collectionRange(collection), true, true)
      .filter(
        (record) =>
          (filter.includeDeleted === true || !record.deleted) &&
          (filter.siteId === undefined || record.fields.siteId === filter.siteId),
      );
    if (filter.limit !== undefined) query = query.limit(filter.limit);
    return (await query.toArray()) as LocalRecord<C>[];
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
   * (e.g. "oka 2016", "2016-04-09", "9/4/2016"), through the multi-entry `terms` index, in the
   * index's order. The first word's matches are read as primary keys only (one indexed read, no
   * cursor), made distinct here; the other words and the site are checked on their search rows.
   */
  async searchPatients(
    query: string,
    options: { limit?: number; siteId?: string } = {},
  ): Promise<LocalRecord<'patient'>[]> {
    const [first, ...rest] = searchWords(query);
    if (first === undefined) return [];
    const limit = options.limit ?? 50;
    const narrowed = rest.length > 0 || options.siteId !== undefined;
    const candidates = await this.patientIdsByTermPrefix(first, narrowed ? null : limit);
    let matched = candidates.slice(0, limit);
    if (narrowed) {
      matched = [];
      for (let i = 0; i < candidates.length && matched.length < limit; i += SEARCH_ROW_CHUNK) {
        const rows = await this.db.patientSearch.bulkGet(candidates.slice(i, i + SEARCH_ROW_CHUNK));
        for (const row of rows) {
          if (
            row &&
            (options.siteId === undefined || row.siteId === options.siteId) &&
            rest.every((word) => row.terms.some((term) => term.startsWith(word)))
          ) {
            matched.push(row.id);
            if (matched.length === limit) break;
          }
        }
      }
    }
    const records = await this.db.records.bulkGet(
      matched.map((id) => ['patient', id] as unknown as string),
    );
    return records.filter(
      (record): record is StoredRecord => record !== undefined && !record.deleted,
    ) as LocalRecord<'patient'>[];
  }

  /**
   * Ids of patients with a term starting with `prefix`, each once, in index order; `wanted`
   * (when given) bounds the read: first exactly that many index entries, which are that many
   * patients unless one has two matching terms ("ada adair"); then four times as many, since a
   * patient has only a few terms; and the whole range only when even that was short.
   */
  private async patientIdsByTermPrefix(prefix: string, wanted: number | null): Promise<string[]> {
    const range = () => this.db.patientSearch.where('terms').startsWith(prefix);
    if (wanted !== null) {
      for (const bound of [wanted, wanted * 4]) {
        const keys = await range().limit(bound).primaryKeys();
        const ids = [...new Set(keys)];
        if (ids.length >= wanted || keys.length < bound) return ids;
      }
    }
    return [...new Set(await range().primaryKeys())];
  }

  private async writeEdit(
    collection: CollectionName,
    id: string,
    edit: Edit,
    ctx: EditContext,
    creating: boolean,
  ): Promise<void> {
    const db = this.db;
    const written = await db.transaction(
      'rw',
      [db.records, db.outbox, db.meta, db.patientSearch],
      async () => {
        const key = [collection, id] as unknown as string;
        const existing = await db.records.get(key);
        if (creating && existing) throw new Error(`A ${collection} record ${id} already exists`);
        if (!creating && !existing) throw new RecordNotFoundError(collection, id);
        const base: StoredRecord = existing ?? {
          collection,
          id,
          version: 0,
          deleted: false,
          fields: {},
          conflicts: [],
          pendingFields: [],
          serverFields: {},
          updatedAt: ctx.nowMs,
        };
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
        const record = applyEditToRecord(base, changed, deleted, ctx.nowMs);
        await db.records.put(record);

        const latest = await db.outbox
          .where('[collection+recordId]')
          .equals([collection, id])
          .sortBy('seq')
          .then((entries) => entries.at(-1));
        const canCoalesce =
          latest !== undefined &&
          latest.state === 'pending' &&
          latest.attempts === 0 &&
          latest.authorId === ctx.authorId &&
          latest.deviceId === ctx.deviceId &&
          latest.baseVersion === base.version;
        if (canCoalesce) {
          const merged: OutboxEntry = {
            ...latest,
            fields: { ...latest.fields, ...changed },
            hlc,
            updatedAt: ctx.nowMs,
          };
          if (deleted !== undefined) merged.deleted = deleted;
          await db.outbox.put(merged);
        } else {
          const entry: OutboxEntry = {
            changeId: uuidv7(),
            seq: await nextSeq(db),
            collection,
            recordId: id,
            baseVersion: base.version,
            hlc,
            fields: changed,
            authorId: ctx.authorId,
            deviceId: ctx.deviceId,
            createdAt: ctx.nowMs,
            updatedAt: ctx.nowMs,
            state: 'pending',
            error: null,
            attempts: 0,
          };
          if (deleted !== undefined) entry.deleted = deleted;
          await db.outbox.add(entry);
        }
        if (collection === 'patient') await db.patientSearch.put(patientSearchRow(record));
        return true;
      },
    );
    if (written) notifyDataChange({ collections: [collection], recordIds: [id], outbox: true });
  }
}

/** The repository on the tablet's own database. */
export const recordsRepository = new RecordsRepository();
