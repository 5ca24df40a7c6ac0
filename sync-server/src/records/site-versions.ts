// The highest committed version of each site's records, for the live-changes stream
// (docs/sync-protocol.md, "Live changes"): a device's `changed` event carries the highest of its
// own sites, so nothing of another site's activity reaches it. Run as its own statement (READ
// COMMITTED, outside any transaction), so it sees every commit made before it began. One index
// probe per site ("sync_record_site_version_idx" read backwards).
import type { EntityManager } from '@mikro-orm/postgresql';
import { jsonParam, sqlRows } from '../database/sql';

/** Site id → the highest version of its records (0 for a site with none). */
export async function latestVersionsOf(
  em: EntityManager,
  sites: readonly string[],
): Promise<Map<string, number>> {
  const latest = new Map<string, number>();
  const wanted = [...new Set(sites)];
  if (wanted.length === 0) return latest;
  const rows = await sqlRows<{ site: string; latest: string | null }>(
    em,
    `select s."id" as "site",
            (select max(r."version") from "sync_record" r where r."site_id" = s."id"::uuid)::text as "latest"
       from jsonb_array_elements_text(?::jsonb) as s("id")`,
    [jsonParam(wanted)],
  );
  for (const row of rows) latest.set(row.site, Number(row.latest ?? 0));
  return latest;
}

/** The highest version among the sites (0 when none has records). */
export function highestOf(latest: ReadonlyMap<string, number>, sites: readonly string[]): number {
  let highest = 0;
  for (const site of sites) highest = Math.max(highest, latest.get(site) ?? 0);
  return highest;
}
