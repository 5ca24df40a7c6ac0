// How the server numbers changes so that pull cursors are safe against out-of-order commits
// (docs/sync-protocol.md, guarantee 4).
//
// The problem: a version taken from a sequence inside a transaction can commit after a higher
// one. A puller that saw version 50 (committed) and moved its cursor to 50 would never see
// version 45 when that transaction commits a moment later.
//
// The method: a transaction-id watermark. Every writing transaction first takes its top-level
// transaction id (`pg_current_xact_id()`, a 64-bit xid8 that never wraps) and numbers its
// changes `xid × 1000 + n`, n = 1..999. So versions order by transaction id first.
// A pull runs in one REPEATABLE READ snapshot and reads `pg_snapshot_xmin(pg_current_snapshot())`:
// every transaction with an id below that xmin has ended (committed, and visible to the snapshot,
// or rolled back), and every transaction still running, or not yet started, has an id >= xmin.
// The pull returns only versions below `xmin × 1000`; those are final, and any version written
// later is at least `xmin × 1000`, so no later commit can land behind the cursor. A change
// committed by a younger transaction while an older one is still open waits until that one ends:
// the hold-back the protocol allows, bounded by the statement and idle-in-transaction timeouts.
// Versions stay one strictly increasing server-wide counter (PostgreSQL's transaction counter,
// refined by the change's place in its transaction); they are not dense.
//
// The transaction id is first raised by `sync_version_offset.xid_offset` (0 on a new server): a
// restore into a fresh cluster raises it so new versions stay above the stored ones, and tests
// raise it to start versions just below a power of ten. It changes only while nothing writes.
//
// Versions are bigints in SQL and numbers on the wire; they are compared and ordered as numbers
// everywhere. A select that casts "version" to text must not also order by the bare name
// "version": ORDER BY resolves an output alias first, so pages came out in text order
// (1000001 before 743001) and cursors skipped records. sql-alias-order.spec.ts catches that.

/** Epoch of the cursors this server hands out. Cursors of epoch 1 came from text-ordered pages. */
export const CURSOR_EPOCH = 2;

/** Versions one transaction can number; a push carries at most 500 changes. */
export const VERSIONS_PER_TRANSACTION = 1000;

const XID_OFFSET_SQL = `(select "xid_offset" from "sync_version_offset")`;

/**
 * First statement of a writing transaction: assigns its transaction id (so every version it
 * numbers is above the watermark of any snapshot taken while it runs) and bounds how long one
 * statement may hold back pulls.
 */
export const BEGIN_VERSIONED_WRITE_SQL = `select ((pg_current_xact_id()::text::bigint + ${XID_OFFSET_SQL}) * ${VERSIONS_PER_TRANSACTION})::text as "base", set_config('statement_timeout', '5000', true) as "timeout"`;

/** Versions below this bound are final in the pull's snapshot (see above). */
export const SAFE_VERSION_BOUND_SQL = `(pg_snapshot_xmin(pg_current_snapshot())::text::bigint + ${XID_OFFSET_SQL}) * ${VERSIONS_PER_TRANSACTION}`;

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
