// Which cached queries a committed write makes stale. A write names its collections and, when
// it knows them, its record ids (data-events.ts). A query is refreshed when it reads one of those
// collections and could see one of those records: it holds the record already, or the record's
// placement (visit, patient: fixed once written) is the query's, or the record is one the tablet
// has not shown anywhere yet (a new record might belong to any list of its collection). Writes
// that do not list their ids (a sync page) refresh every query of their collections.
import type { Query, QueryClient } from '@tanstack/react-query';
import type { DataChange } from './data-events';
import { queryKeys, queryReads, type QueryRead } from './query-keys';

interface SeenRecord {
  id: string;
  fields?: Record<string, unknown>;
}

function isRecord(value: unknown): value is SeenRecord {
  return (
    typeof value === 'object' &&
    value !== null &&
    typeof (value as { id?: unknown }).id === 'string' &&
    typeof (value as { fields?: unknown }).fields === 'object'
  );
}

/** The records a query's data holds (a record, lists, maps and bundles of them), by id. */
function recordsIn(data: unknown, into: Map<string, SeenRecord>, depth = 0): void {
  if (data === null || data === undefined || typeof data !== 'object' || depth > 4) return;
  if (isRecord(data)) {
    into.set(data.id, data);
    return;
  }
  const values =
    data instanceof Map ? [...data.values()] : Array.isArray(data) ? data : Object.values(data);
  for (const value of values) recordsIn(value, into, depth + 1);
}

const readsCache = new WeakMap<Query, QueryRead[]>();

function readsOf(query: Query): QueryRead[] {
  let reads = readsCache.get(query);
  if (!reads) {
    reads = queryReads(query.queryKey);
    readsCache.set(query, reads);
  }
  return reads;
}

/** The cached queries a change makes stale (the Outbox's included when it changed). */
export function staleQueries(change: DataChange, queries: readonly Query[]): Query[] {
  const changed = new Set<string>(change.collections);
  const ids = change.recordIds;
  const idSet = new Set(ids ?? []);
  const stale = new Set<Query>();
  // Each query that reads a changed collection, with the records it holds.
  const candidates: { query: Query; reads: QueryRead[]; holds: Map<string, SeenRecord> }[] = [];
  const seen = new Map<string, SeenRecord>();
  for (const query of queries) {
    if (change.outbox && query.queryKey[1] === queryKeys.outbox.all()[1]) stale.add(query);
    const reads = readsOf(query).filter((read) => changed.has(read.collection));
    if (reads.length === 0) continue;
    const holds = new Map<string, SeenRecord>();
    if (ids !== undefined) recordsIn(query.state.data, holds);
    for (const [id, record] of holds) seen.set(id, record);
    candidates.push({ query, reads, holds });
  }
  for (const { query, reads, holds } of candidates) {
    const affected =
      ids === undefined ||
      reads.some((read) => {
        if (!read.where) return true;
        const { field, value } = read.where;
        if (field === 'id') return idSet.has(value);
        return ids.some((id) => {
          if (holds.has(id)) return true;
          const known = seen.get(id);
          return known === undefined || known.fields?.[field] === value;
        });
      });
    if (affected) stale.add(query);
  }
  return [...stale];
}

/**
 * Marks the queries a change touched stale and re-runs those on screen. A query already
 * re-running since the write is joined rather than started again (`cancelRefetch: false`), so a
 * screen may await this after its own write without a second read.
 */
export function refreshAfterWrite(queryClient: QueryClient, change: DataChange): Promise<void> {
  const stale = new Set(staleQueries(change, queryClient.getQueryCache().getAll()));
  if (stale.size === 0) return Promise.resolve();
  return queryClient.invalidateQueries(
    { predicate: (query) => stale.has(query) },
    { cancelRefetch: false },
  );
}

/** What the data listener does on each change: re-runs stale queries, restarting any in flight. */
export function invalidateForChange(queryClient: QueryClient, change: DataChange): void {
  const stale = new Set(staleQueries(change, queryClient.getQueryCache().getAll()));
  if (stale.size === 0) return;
  void queryClient.invalidateQueries({ predicate: (query) => stale.has(query) });
}
