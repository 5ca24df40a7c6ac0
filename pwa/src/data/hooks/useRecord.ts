import type { CollectionName } from '@fuselight/shared';
import { useQuery } from '@tanstack/react-query';
import { useRepositories } from '../data-context';
import { queryKeys } from '../query-keys';
import type { LocalRecord } from '../records-repository';
import { useDataInvalidation } from './useDataInvalidation';

/** One record from the tablet's database; `data` is null when the tablet does not hold it. */
export function useRecord<C extends CollectionName>(collection: C, id: string | null | undefined) {
  const { records } = useRepositories();
  useDataInvalidation();
  return useQuery({
    queryKey: queryKeys.records.detail(collection, id ?? ''),
    queryFn: async (): Promise<LocalRecord<C> | null> =>
      (await records.get(collection, id as string)) ?? null,
    enabled: typeof id === 'string' && id.length > 0,
    networkMode: 'always',
  });
}
