// Data that has lived: versions of different lengths. A fresh test database numbers its changes
// from a low transaction id, so every version has the same number of digits and a comparison or
// an ordering done as text instead of as numbers goes unnoticed. This raises the database's
// version offset (sync_version_offset, see records/record-version.ts) so the next versions start
// a few transactions below a power of ten that every stored version is below: what follows
// crosses from n to n + 1 digits, as a clinic's versions do when they pass 10^6, 10^7, …
import pg from 'pg';
import { VERSIONS_PER_TRANSACTION } from '../records/record-version';

export interface VersionBoundary {
  /** The first version with one digit more than the ones just before it. */
  boundary: number;
  /** The offset now added to transaction ids. */
  xidOffset: number;
}

const digits = (n: number) => String(Math.max(0, Math.trunc(n))).length;

/**
 * Puts the next version about `transactionsBefore` writing transactions below a power of ten
 * with at least one digit more than any version stored or about to be numbered (and at least
 * `minDigits` digits). Only while nothing writes to this database. Other databases of the
 * cluster use transaction ids too, so the crossing may come a little sooner, never later.
 */
export async function startVersionsBelowPowerOfTen(
  databaseUrl: string,
  options: { transactionsBefore?: number; minDigits?: number } = {},
): Promise<VersionBoundary> {
  const before = options.transactionsBefore ?? 10;
  const client = new pg.Client({ connectionString: databaseUrl });
  await client.connect();
  try {
    const { rows } = await client.query<{ next_xid: string; offset: string; stored: string }>(
      `select pg_snapshot_xmax(pg_current_snapshot())::text as "next_xid",
              (select "xid_offset" from "sync_version_offset")::text as "offset",
              coalesce((select max(r."version") from "sync_record" r), 0)::text as "stored"`,
    );
    const row = rows[0];
    if (!row) throw new Error('the version offset could not be read');
    const nextXid = Number(row.next_xid);
    const nextVersion = (nextXid + Number(row.offset)) * VERSIONS_PER_TRANSACTION;
    const wanted = Math.max(
      digits(Number(row.stored)) + 1,
      digits(nextVersion + (before + 1) * VERSIONS_PER_TRANSACTION) + 1,
      options.minDigits ?? 0,
    );
    const boundary = 10 ** (wanted - 1);
    if (!Number.isSafeInteger(boundary * 10)) {
      throw new Error(`a version boundary of ${wanted} digits is beyond exact integers`);
    }
    const xidOffset = boundary / VERSIONS_PER_TRANSACTION - nextXid - before;
    await client.query(`update "sync_version_offset" set "xid_offset" = $1`, [xidOffset]);
    return { boundary, xidOffset };
  } finally {
    await client.end();
  }
}

/** How many digits the versions have, smallest first (e.g. [9, 10] once a boundary is crossed). */
export function versionLengths(versions: readonly number[]): number[] {
  return [...new Set(versions.map(digits))].sort((a, b) => a - b);
}
