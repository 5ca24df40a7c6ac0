// What the server holds, read straight from its tables (not through pull), so a pull that skips
// or repeats records cannot hide itself in the comparison: the snapshot a tablet must converge on.
import pg from 'pg';
import type { Clinic } from './clinic-server';
import { pullPages } from './server-view';

export interface SnapshotEntry {
  version: number;
  deleted: boolean;
  fields: Record<string, unknown>;
  conflicts: string[];
}

/** The server's records of `siteIds` (default: the clinic's site) as {collection/id: entry}. */
export async function databaseSnapshot(
  clinic: Clinic,
  siteIds: readonly string[] = [clinic.siteId],
): Promise<Record<string, SnapshotEntry>> {
  const client = new pg.Client({ connectionString: clinic.t.db.url });
  await client.connect();
  try {
    const { rows } = await client.query<{
      collection: string;
      id: string;
      v: string;
      deleted: boolean;
      fields: Record<string, unknown>;
      open: string[] | null;
    }>(
      `select r."collection", r."id", r."version"::text as "v", r."deleted", r."fields",
              (select array_agg(c."field" order by c."field") from "sync_conflict" c
                where c."record_id" = r."id" and c."status" = 'open') as "open"
         from "sync_record" r
        where r."site_id" = any($1::uuid[])`,
      [siteIds],
    );
    return Object.fromEntries(
      rows
        .map((r): [string, SnapshotEntry] => [
          `${r.collection}/${r.id}`,
          {
            version: Number(r.v),
            deleted: r.deleted,
            fields: r.fields,
            conflicts: [...(r.open ?? [])].sort(),
          },
        ])
        .sort(([a], [b]) => a.localeCompare(b)),
    );
  } finally {
    await client.end();
  }
}

/** Sets a tablet's cursor epoch on the server, as for a tablet enrolled before the epoch began. */
export async function setCursorEpoch(clinic: Clinic, deviceId: string, epoch: number) {
  const client = new pg.Client({ connectionString: clinic.t.db.url });
  await client.connect();
  try {
    await client.query(`update "device" set "pull_epoch" = $1 where "id" = $2`, [epoch, deviceId]);
  } finally {
    await client.end();
  }
}

/**
 * A first sync through the wire with pages of `limit`: every record of the pages in order. Checks
 * as it goes that versions rise and no record comes twice; throws on a reset.
 */
export async function firstSyncThroughPull(
  clinic: Clinic,
  token: string,
  limit: number,
): Promise<Array<{ key: string; version: number }>> {
  const received: Array<{ key: string; version: number }> = [];
  const seen = new Set<string>();
  for await (const page of pullPages(clinic, token, { limit, resetIs: 'an error' })) {
    for (const record of page.records) {
      const key = `${record.collection}/${record.id}`;
      if (seen.has(key))
        throw new Error(`${key} came twice in a first sync with pages of ${limit}`);
      if (record.version <= page.after) {
        throw new Error(
          `${key} came with version ${record.version}, not after cursor ${page.after}`,
        );
      }
      seen.add(key);
      received.push({ key, version: record.version });
    }
  }
  return received;
}
