// The tablet's IndexedDB, through Dexie: the device's source of truth. Components never import
// this file; they use the repositories beside it. Every schema change is a new db.version(n)
// with an upgrade that migrates what is there (never dropping the outbox).
import Dexie, { type EntityTable, type Transaction } from 'dexie';
import type { CollectionName } from '@fuselight/shared';
import { PatientDirectory } from './patient-directory';
import { tabletVault, type DataKeyVault } from './crypto/data-key-vault';
import type { KeySlot } from './crypto/key-slots';
import { sealingMiddleware } from './crypto/sealing-middleware';
import type { TableSealing } from './crypto/value-codec';

/** Name of the tombstone pseudo-field in `pendingFields` and `serverFields`. */

/** The tablet's records database. */
export const DEFAULT_DB_NAME = 'fuselight';
export const TOMBSTONE = 'deleted';

/**
 * A synced record as the tablet holds it: the server's envelope plus local bookkeeping. A record
 * made by a newer build may be of a collection, or carry fields, that this build does not know:
 * it is stored as it came (docs/sync-protocol.md, Records a device does not know), so
 * `collection` is then not one of this build's names; screens read records by collection and
 * never meet it.
 */
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

/**
 * What stays in the clear of each sealed table: the fields its indexes read, never a name, a
 * date of birth, a clinic number or a finding (docs/threat-model.md). `meta` holds counters,
 * clocks and cursors only, and `keySlots` holds wrapped keys.
 */
export const SEALED_TABLES: Readonly<Record<string, TableSealing>> = {
  records: { plain: ['collection', 'id', 'version', 'fields.visitId', 'fields.patientId'] },
  outbox: {
    plain: ['changeId', 'seq', 'collection', 'recordId', 'state', 'authorId', 'createdAt'],
  },
};

/**
 * One Dexie schema version as it shipped: its store declarations (Dexie's diff from the version
 * before) and the upgrade that moves the data of the version before it. Every version ever
 * shipped stays in DEXIE_SCHEMA_HISTORY: a tablet may open this build with any of them, and
 * Dexie needs the chain to upgrade it. The upgrade fixtures (db-upgrade.fixtures.ts) hold one
 * database of each version and check that every row survives to the current one.
 */
export interface DexieSchemaDeclaration {
  version: number;
  stores: Record<string, string | null>;
  upgrade?: (tx: Transaction) => Promise<void>;
}

export const DEXIE_SCHEMA_HISTORY: readonly DexieSchemaDeclaration[] = [
  {
    version: 1,
    stores: {
      records: '[collection+id], collection, id, version, updatedAt',
      outbox: 'changeId, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
    },
  },
  {
    version: 2,
    stores: {
      records:
        '[collection+id], collection, id, version, updatedAt, [collection+fields.visitId], [collection+fields.patientId]',
      outbox: 'changeId, &seq, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
      patientSearch: 'id, *terms, siteId',
    },
    upgrade: (tx) => upgradeToVersion2(tx),
  },
  // Version 3 keeps only the indexes something reads: a first sync writes every record once
  // per index, and `id`, `version`, `updatedAt` and the search rows' `siteId` were never
  // queried, while `collection` is served by the primary key's own range. Dropping an index
  // moves no data: every record, Outbox entry and search row stays as it is.
  {
    version: 3,
    stores: {
      records: '[collection+id], [collection+fields.visitId], [collection+fields.patientId]',
      outbox: 'changeId, &seq, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
      patientSearch: 'id, *terms',
    },
  },
  // Version 4 drops the persisted search rows: the patient search is answered from memory
  // (patient-directory.ts), built from the patient records themselves. Nothing else changes.
  { version: 4, stores: { patientSearch: null } },
  // Version 5 adds the key slots of the protected tablet. Nothing is rewritten on upgrade
  // (there is no key yet): the first online sign-in or PIN afterwards makes the data key and
  // seals every record and Outbox entry in place (crypto/seal-in-place.ts); until then values
  // stay readable as they are.
  { version: 5, stores: { keySlots: 'id, userId' } },
];

export class FuselightDb extends Dexie {
  records!: EntityTable<StoredRecord, 'id'>;
  outbox!: EntityTable<OutboxEntry, 'changeId'>;
  meta!: EntityTable<MetaEntry, 'key'>;
  /** The tablet's data key wrapped once per person (and once for the server's share). */
  keySlots!: EntityTable<KeySlot, 'id'>;
  /** The patient search, held in memory and kept current by a middleware on this connection. */
  readonly patientDirectory: PatientDirectory;

  constructor(
    name = DEFAULT_DB_NAME,
    readonly vault: DataKeyVault = tabletVault,
  ) {
    super(name);
    this.patientDirectory = new PatientDirectory(this);
    this.use(this.patientDirectory.middleware());
    this.use(sealingMiddleware(vault, SEALED_TABLES));
    // A database with key slots is protected: nothing may be written to it in the clear.
    this.on('ready', async () => {
      if ((await this.keySlots.count()) > 0) vault.markProtected();
    });
    this.on('close', () => this.patientDirectory.reset());
    for (const declaration of DEXIE_SCHEMA_HISTORY) {
      const version = this.version(declaration.version).stores(declaration.stores);
      if (declaration.upgrade) version.upgrade(declaration.upgrade);
    }
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
}

/** A record the tablet has not held before: nothing stored, nothing pending, no version yet. */
export function newStoredRecord(
  collection: CollectionName,
  id: string,
  updatedAt: number,
): StoredRecord {
  return {
    collection,
    id,
    version: 0,
    deleted: false,
    fields: {},
    conflicts: [],
    pendingFields: [],
    serverFields: {},
    updatedAt,
  };
}

export const DEXIE_SCHEMA_VERSION = Math.max(
  ...DEXIE_SCHEMA_HISTORY.map((declaration) => declaration.version),
);

let defaultDb: FuselightDb | null = null;

/** The tablet's database (opened lazily; tests may replace it with setDefaultDb). */
export function getDefaultDb(): FuselightDb {
  defaultDb ??= new FuselightDb();
  return defaultDb;
}

export function setDefaultDb(db: FuselightDb | null): void {
  defaultDb = db;
}
