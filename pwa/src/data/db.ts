// The tablet's IndexedDB, through Dexie: the device's source of truth. Components never import
// this file; they use the repositories beside it. Every schema change is a new db.version(n)
// with an upgrade that migrates what is there (never dropping the outbox).
import Dexie, { type EntityTable } from 'dexie';
import type { CollectionName } from '@fuselight/shared';

/** A synced record as the tablet holds it: the server's envelope plus local bookkeeping. */
export interface LocalRecord {
  collection: CollectionName;
  id: string;
  /** Server version of the last pulled or acknowledged state (0 for a record made here). */
  version: number;
  deleted: boolean;
  fields: Record<string, unknown>;
  /** Field names with an open dispute on the server. */
  conflicts: string[];
  /** Field names edited here and not yet acknowledged by the server. */
  pendingFields: string[];
  updatedAt: number;
}

/** One queued change of the Outbox, written in the same transaction as the edit. */
export interface OutboxEntry {
  changeId: string;
  collection: CollectionName;
  recordId: string;
  baseVersion: number;
  hlc: string;
  fields: Record<string, unknown>;
  deleted: boolean;
  /** The person who made the edit; it is pushed under their session. */
  authorId: string;
  createdAt: number;
  /** 'pending' until pushed; 'rejected' keeps it visible for its author to fix or discard. */
  state: 'pending' | 'rejected';
  error: string | null;
  attempts: number;
}

export interface MetaEntry {
  key: string;
  value: unknown;
}

export class FuselightDb extends Dexie {
  records!: EntityTable<LocalRecord, 'id'>;
  outbox!: EntityTable<OutboxEntry, 'changeId'>;
  meta!: EntityTable<MetaEntry, 'key'>;

  constructor(name = 'fuselight') {
    super(name);
    this.version(1).stores({
      records: '[collection+id], collection, id, version, updatedAt',
      outbox: 'changeId, [collection+recordId], state, authorId, createdAt',
      meta: 'key',
    });
  }
}

export const DEXIE_SCHEMA_VERSION = 1;
