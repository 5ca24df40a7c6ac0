// How the server numbers changes so that pull cursors are safe against out-of-order commits
// (docs/sync-protocol.md, guarantee 4), whatever else runs on the PostgreSQL cluster.
//
// The problem: a version taken inside a transaction can commit after a higher one. A puller that
// saw version 50 (committed) and moved its cursor to 50 would never see version 45 when that
// transaction commits a moment later.
//
// Versions: every writing transaction takes its top-level transaction id (`pg_current_xact_id()`,
// a 64-bit xid8 that never wraps), raised by `sync_version_offset.xid_offset`, and numbers its
// changes `xid × 1000 + n`, n = 1..999. So versions order by transaction id first. Writers run
// concurrently; nothing serialises them but the rows they share.
//
// The writer registry: before it takes its transaction id, a writer takes a shared transaction-level
// advisory lock (WRITER_LOCK, one key for all writers), held until it commits or rolls back.
// PostgreSQL makes a transaction visible to new snapshots before it releases its locks.
//
// The safe bound of a pull: one statement, before the pull's snapshot, reads the next transaction
// id not yet handed out (its own statement snapshot's xmax, taken as the statement starts) and then
// the writers registered in this database (pg_locks, read once) with their transaction ids. The
// bound is the smallest of the next id and the ids of the registered writers, × 1000. Then the
// pull's REPEATABLE READ snapshot is taken, and returns versions below the bound only:
// - a writer registered when the registry was read has an id at or above the bound (or, having
//   none yet, takes one at or above the next id);
// - a writer that registers later takes an id at or above the next id, so at or above the bound;
// - a writer with an id below the bound that is not registered any more has ended, and is visible
//   to the pull's snapshot, taken after.
// So no version below the bound can commit after the pull, and a cursor never passes one that
// will. Other people's transactions on the cluster (a `pg_dump` backup, an analyst's session left
// open, another database) never register, so they hold nothing back; only the server's own open
// writes do, for as long as they run (bounded by the statement timeout). The earlier watermark,
// `pg_snapshot_xmin`, held every pull back while any transaction of the cluster stayed open.
//
// `sync_version_offset.xid_offset` (0 on a new server) is added to the transaction id: a restore
// into a fresh cluster (scripts/restore.mjs) raises it so new versions stay above the stored ones,
// and tests raise it to start versions just below a power of ten. It changes only while nothing
// writes.
//
// Versions are bigints in SQL and numbers on the wire; they are compared and ordered as numbers
// everywhere. A select that casts "version" to text must not also order by the bare name
// "version": ORDER BY resolves an output alias first, so pages came out in text order
// (1000001 before 743001) and cursors skipped records. sql-alias-order.spec.ts catches that.

/** Epoch of the cursors this server hands out. Cursors of epoch 1 came from text-ordered pages. */
export const CURSOR_EPOCH = 2;

/** Versions one transaction can number; a push carries at most 500 changes. */
export const VERSIONS_PER_TRANSACTION = 1000;

/** The advisory lock every writer of synced records holds (two int4 keys: 'FSL1', 1). */
export const WRITER_LOCK = { classId: 1179861809, objId: 1 } as const;

const XID_OFFSET_SQL = `(select "xid_offset" from "sync_version_offset")`;

/**
 * First statement of a writing transaction: registers the writer (the advisory lock, taken in the
 * subquery before the transaction id is), assigns its transaction id, and bounds how long each
 * later statement may run (and so hold pulls back).
 */
export const BEGIN_VERSIONED_WRITE_SQL = `select ((pg_current_xact_id()::text::bigint + ${XID_OFFSET_SQL}) * ${VERSIONS_PER_TRANSACTION})::text as "base",
       set_config('statement_timeout', '5000', true) as "timeout"
  from (select pg_advisory_xact_lock_shared(${WRITER_LOCK.classId}, ${WRITER_LOCK.objId}) offset 0) as "registered"`;

/**
 * Versions below this bound are final for any snapshot taken after this statement (see above).
 * Run it on its own, in READ COMMITTED, before the pull's transaction begins. pg_locks shows 32-bit
 * transaction ids; each is widened to 64 bits beside the next id.
 */
export const SAFE_VERSION_BOUND_SQL = `with "next" as (select pg_snapshot_xmax(pg_current_snapshot())::text::bigint as "xid"),
  "locks" as materialized (select "locktype", "pid", "classid", "objid", "objsubid", "database", "granted", "transactionid" from pg_locks),
  "writers" as (
    select "n"."xid" - (("n"."xid" - t."transactionid"::text::bigint) % 4294967296 + 4294967296) % 4294967296 as "xid"
      from "locks" a
      join "locks" t on t."pid" = a."pid" and t."locktype" = 'transactionid'
      cross join "next" "n"
     where a."locktype" = 'advisory' and a."granted"
       and a."classid" = ${WRITER_LOCK.classId} and a."objid" = ${WRITER_LOCK.objId} and a."objsubid" = 2
       and a."database" = (select "oid" from pg_database where "datname" = current_database()))
  select ((least((select "xid" from "next"), (select min("xid") from "writers")) + ${XID_OFFSET_SQL}) * ${VERSIONS_PER_TRANSACTION})::text as "bound"`;

/** Numbers the changes of one transaction. */
export class VersionAllocator {
  private used = 0;

  constructor(readonly base: number) {
    if (!Number.isSafeInteger(base + VERSIONS_PER_TRANSACTION)) {
      throw new Error(`transaction version base ${base} is beyond exact integers`);
    }
  }

  static fromRow(row: { base: string | number } | undefined): VersionAllocator {
    if (!row) throw new Error('the transaction id could not be read');
    return new VersionAllocator(Number(row.base));
  }

  next(): number {
    this.used += 1;
    if (this.used >= VERSIONS_PER_TRANSACTION) {
      throw new Error(`one transaction may number at most ${VERSIONS_PER_TRANSACTION - 1} changes`);
    }
    return this.base + this.used;
  }
}
