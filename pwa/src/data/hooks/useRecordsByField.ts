import type { CollectionName } from '@fuselight/shared';
import { useQuery } from '@tanstack/react-query';
import { useRepositories } from '../data-context';
import { queryKeys } from '../query-keys';
import type { ListFilter, LocalRecord, PlacementField } from '../records-repository';
import { useDataInvalidation } from './useDataInvalidation';

/** Records of a collection placed on one visit or patient (e.g. the sections of a visit). */
export function useRecordsByField<C extends CollectionName>(
  collection: C,
  field: PlacementField,
  value: string | null | undefined,
) {
  const { records } = useRepositories();
  useDataInvalidation();
  return useQuery({
    queryKey: queryKeys.records.byField(collection, field, value ?? ''),
    queryFn: (): Promise<LocalRecord<C>[]> =>
      records.listByField(collection, field, value as string),
    enabled: typeof value === 'string' && value.length > 0,
    networkMode: 'always',
  });
}

/** Every record of a collection (not deleted unless asked). */
export function useRecords<C extends CollectionName>(collection: C, filter: ListFilter = {}) {
  const { records } = useRepositories();
  useDataInvalidation();
  return useQuery({
    queryKey: queryKeys.records.list(collection, filter),
    queryFn: (): Promise<LocalRecord<C>[]> => records.list(collection, filter),
    networkMode: 'always',
  });
}
