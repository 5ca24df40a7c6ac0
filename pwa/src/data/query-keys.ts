// The one TanStack Query key factory of the tablet (docs/conventions.md, boundary 3). Keys nest so
// that invalidating `records.collection(c)` refreshes every query of that collection.
import type { CollectionName } from '@fuselight/shared';
import type { ListFilter, PlacementField } from './records-repository';

export const queryKeys = {
  all: ['fuselight'] as const,
  records: {
    all: () => [...queryKeys.all, 'records'] as const,
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
    all: () => [...queryKeys.all, 'outbox'] as const,
    entries: () => [...queryKeys.outbox.all(), 'entries'] as const,
    counts: () => [...queryKeys.outbox.all(), 'counts'] as const,
  },
} as const;
