// The encoding of a push's answers for the change-log statement (change-log.ts storeResults):
// one JSON parameter, one row per change, from which the statement fills both the idempotency log
// ("sync_change", its stored result built in SQL) and, for an applied change, its audit event.
// What most audited rows share (the audit kind, site and collection) is bound once as its own
// parameters; a row carries its own only where it differs. The statement reads exactly these keys
// (`jsonb_to_recordset … as r("c" text, "s" text, …)`); one letter each because every byte is
// sent, and the meaning of a letter belongs to this statement alone (record-row.codec.ts has its
// own `c` and `s`).
//
// Keys of an encoded row (EncodedChangeLogRow):
//
// | key | meaning                                   | present                                     |
// | --- | ----------------------------------------- | ------------------------------------------- |
// | c   | change id, as the tablet sent it          | always                                      |
// | s   | status: applied, merged, conflict, rejected | always                                    |
// | r   | record id (null when it was not a UUID)   | always                                      |
// | e   | error, in words                           | rejected changes only                       |
// | v   | version written                           | accepted changes only                       |
// | k   | fields that opened or joined a conflict   | accepted changes with conflicts only        |
// | a   | audit event id                            | audited (applied) changes only              |
// | f   | fields the change wrote (audit detail)    | audited changes only                        |
// | n   | audit kind                                | audited rows whose kind differs from shared |
// | i   | site id                                   | audited rows whose site differs from shared |
// | o   | collection                                | audited rows whose collection differs       |
import type { PushResult } from '@fuselight/shared';

/** What the audit trail keeps of an applied change, besides its result. */
export interface ChangeAudit {
  /** The audit event's id. */
  id: string;
  kind: string;
  siteId: string;
  collection: string;
  /** The fields the change wrote (and `deleted` for a deletion or restore). */
  fields: string[];
}

export interface ChangeLogEntry {
  result: PushResult;
  recordId: string | null;
  /** Present for a change that was applied: its audit event is written with its log row. */
  audit?: ChangeAudit;
}

/** Audit values most rows share, bound once (those of the first audited entry). */
export interface ChangeLogShared {
  kind: string | null;
  siteId: string | null;
  collection: string | null;
}

export interface EncodedRejectedRow {
  c: string;
  s: 'rejected';
  r: string | null;
  e: string;
}

export interface EncodedAcceptedRow {
  c: string;
  s: 'applied' | 'merged' | 'conflict';
  v: number;
  r: string | null;
  k?: string[];
  a?: string;
  f?: string[];
  n?: string;
  i?: string;
  o?: string;
}

/** One row of the change-log statement's JSON parameter (see the table above). */
export type EncodedChangeLogRow = EncodedRejectedRow | EncodedAcceptedRow;

export interface EncodedChangeLog {
  shared: ChangeLogShared;
  rows: EncodedChangeLogRow[];
}

/**
 * Encodes the entries. A result keeps its change id, status, version, conflicts or error (what
 * the log stores; `replayed` is the answer's, never logged).
 */
export function encodeChangeLog(entries: readonly ChangeLogEntry[]): EncodedChangeLog {
  const common = entries.find((entry) => entry.audit)?.audit;
  const rows = entries.map(({ result, recordId, audit: facts }): EncodedChangeLogRow => {
    if (result.status === 'rejected')
      return { c: result.changeId, s: result.status, r: recordId, e: result.error };
    const row: EncodedAcceptedRow = {
      c: result.changeId,
      s: result.status,
      v: result.version,
      r: recordId,
    };
    if (result.conflicts.length > 0) row.k = result.conflicts;
    if (facts) {
      row.a = facts.id;
      row.f = facts.fields;
      if (facts.kind !== common?.kind) row.n = facts.kind;
      if (facts.siteId !== common?.siteId) row.i = facts.siteId;
      if (facts.collection !== common?.collection) row.o = facts.collection;
    }
    return row;
  });
  return {
    shared: {
      kind: common?.kind ?? null,
      siteId: common?.siteId ?? null,
      collection: common?.collection ?? null,
    },
    rows,
  };
}

/** The entries an encoded log stands for, as the statement reads them. */
export function decodeChangeLog(encoded: EncodedChangeLog): ChangeLogEntry[] {
  const { shared } = encoded;
  return encoded.rows.map((row): ChangeLogEntry => {
    if (row.s === 'rejected') {
      return { result: { changeId: row.c, status: row.s, error: row.e }, recordId: row.r };
    }
    const entry: ChangeLogEntry = {
      result: { changeId: row.c, status: row.s, version: row.v, conflicts: row.k ?? [] },
      recordId: row.r,
    };
    if (row.a !== undefined) {
      const kind = row.n ?? shared.kind;
      const siteId = row.i ?? shared.siteId;
      const collection = row.o ?? shared.collection;
      if (kind === null || siteId === null || collection === null) {
        throw new Error(`change ${row.c}: an audited row with no kind, site or collection`);
      }
      entry.audit = { id: row.a, kind, siteId, collection, fields: row.f ?? [] };
    }
    return entry;
  });
}
