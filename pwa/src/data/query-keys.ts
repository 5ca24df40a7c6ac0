// The one TanStack Query key factory of the tablet (docs/conventions.md, boundary 3): the records on the tablet,
// the Outbox, the charting screens' domain queries, and the clinic server's Review desk and
// identity (people, sites, Fleet) calls. Keys nest, so a key's prefix names a group of queries.
//
// `queryReads` says which records a key's query reads, so that a committed write refreshes only
// the queries that could see it (data/query-invalidation.ts).
import type { CollectionName, SectionCollectionName } from '@fuselight/shared';
import type { ListFilter, PlacementField } from './records-repository';

/** Review desk filters that are part of a disputes query's key. */
export interface DisputeQueryKey {
  siteId?: string;
  patient?: string;
  section?: string;
  minAgeHours?: number;
  sort?: string;
  direction?: 'asc' | 'desc';
  page?: number;
  pageSize?: number;
}

/** The collections a visit's parts are read from: its Sections and its Addenda. */
export type VisitPartCollection = SectionCollectionName | 'addendum';

const ROOT = ['fuselight'] as const;

export const queryKeys = {
  all: ROOT,
  records: {
    all: () => [...ROOT, 'records'] as const,
    collection: (collection: CollectionName) => [...queryKeys.records.all(), collection] as const,
    detail: (collection: CollectionName, id: string) =>
      [...queryKeys.records.collection(collection), 'detail', id] as const,
    list: (collection: CollectionName, filter: ListFilter = {}) =>
      [...queryKeys.records.collection(collection), 'list', filter] as const,
    byField: (collection: CollectionName, field: PlacementField, value: string) =>
      [...queryKeys.records.collection(collection), 'by', field, value] as const,
    patientSearch: (query: string, siteId?: string) =>
      [...queryKeys.records.collection('patient'), 'search', query, siteId ?? null] as const,
  },
  outbox: {
    all: () => [...ROOT, 'outbox'] as const,
    entries: () => [...queryKeys.outbox.all(), 'entries'] as const,
    counts: () => [...queryKeys.outbox.all(), 'counts'] as const,
    /** When the oldest entry was made (how long unsynced edits have waited). */
    oldest: () => [...queryKeys.outbox.all(), 'oldest'] as const,
  },
  /** The browser's storage for this site: persistence granted or not, usage and quota. */
  device: {
    all: () => [...ROOT, 'device'] as const,
    storage: () => [...queryKeys.device.all(), 'storage'] as const,
  },
  /** The charting screens' domain queries (Today, Chart, Visit, Bench). */
  charting: {
    all: () => [...ROOT, 'charting'] as const,
    today: (siteId: string, date: string) =>
      [...queryKeys.charting.all(), 'today', siteId, date] as const,
    search: (query: string) => [...queryKeys.charting.all(), 'search', query] as const,
    patient: (patientId: string) => [...queryKeys.charting.all(), 'patient', patientId] as const,
    patientVisits: (patientId: string) =>
      [...queryKeys.charting.all(), 'patientVisits', patientId] as const,
    patientSections: (patientId: string, collections: readonly string[]) =>
      [...queryKeys.charting.all(), 'patientSections', patientId, collections.join(',')] as const,
    /** Every query of one visit (its record and each part). */
    visit: (visitId: string) => [...queryKeys.charting.all(), 'visit', visitId] as const,
    /** The visit record itself. */
    visitRecord: (visitId: string) => [...queryKeys.charting.visit(visitId), 'record'] as const,
    /** One collection's records on the visit: a Section, or the Addenda. */
    visitPart: (visitId: string, collection: VisitPartCollection) =>
      [...queryKeys.charting.visit(visitId), 'part', collection] as const,
  },
  /** The Review desk's calls to the clinic server. */
  review: {
    all: () => [...ROOT, 'review'] as const,
    summary: () => [...queryKeys.review.all(), 'summary'] as const,
    disputes: (query: DisputeQueryKey) => [...queryKeys.review.all(), 'disputes', query] as const,
    dispute: (id: string) => [...queryKeys.review.all(), 'dispute', id] as const,
    countersign: () => [...queryKeys.review.all(), 'countersign'] as const,
    history: (collection: string, recordId: string) =>
      [...queryKeys.review.all(), 'history', collection, recordId] as const,
  },
  /** Identity calls to the clinic server: people, sites, the Fleet. */
  identity: {
    all: () => [...ROOT, 'identity'] as const,
    people: () => [...queryKeys.identity.all(), 'people'] as const,
    sites: () => [...queryKeys.identity.all(), 'sites'] as const,
    fleet: () => [...queryKeys.identity.all(), 'fleet'] as const,
    clinicSettings: () => [...queryKeys.identity.all(), 'clinic-settings'] as const,
    waitingChanges: (authorId: string) =>
      [...queryKeys.identity.all(), 'waiting-changes', authorId] as const,
  },
} as const;

/**
 * Records of one collection a query reads: all of them, or only those whose field (`id`, or a
 * placement that never changes once written: `visitId`, `patientId`) holds a value.
 */
export interface QueryRead {
  collection: CollectionName;
  where?: { field: 'id' | PlacementField; value: string };
}

/**
 * What the query of a key made by `queryKeys` reads from the tablet's database; an empty list
 * for keys that read none of it (the Outbox, the clinic server's answers) or that are unknown.
 */
export function queryReads(queryKey: readonly unknown[]): QueryRead[] {
  if (queryKey[0] !== ROOT[0]) return [];
  const [, area, a, b, c, d] = queryKey;
  if (area === 'records') {
    const collection = a as CollectionName;
    if (b === 'detail') return [{ collection, where: { field: 'id', value: c as string } }];
    if (b === 'by') {
      return [{ collection, where: { field: c as PlacementField, value: d as string } }];
    }
    return [{ collection }];
  }
  if (area !== 'charting') return [];
  switch (a) {
    case 'today':
      return [{ collection: 'visit' }, { collection: 'patient' }];
    case 'search':
      return [{ collection: 'patient' }];
    case 'patient':
      return [{ collection: 'patient', where: { field: 'id', value: b as string } }];
    case 'patientVisits':
      return [{ collection: 'visit', where: { field: 'patientId', value: b as string } }];
    case 'patientSections':
      return String(c)
        .split(',')
        .filter((name) => name !== '')
        .map((name) => ({
          collection: name as CollectionName,
          where: { field: 'patientId', value: b as string },
        }));
    case 'visit':
      if (c === 'record')
        return [{ collection: 'visit', where: { field: 'id', value: b as string } }];
      if (c === 'part') {
        return [
          { collection: d as CollectionName, where: { field: 'visitId', value: b as string } },
        ];
      }
      return [];
    default:
      return [];
  }
}
