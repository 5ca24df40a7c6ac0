import { useQuery } from '@tanstack/react-query';
import { useRepositories } from '../data-context';
import { queryKeys } from '../query-keys';
import { useDataInvalidation } from './useDataInvalidation';

/** Every Outbox entry, oldest first. */
export function useOutboxEntries() {
  const { outbox } = useRepositories();
  useDataInvalidation();
  return useQuery({
    queryKey: queryKeys.outbox.entries(),
    queryFn: () => outbox.listEntries(),
    networkMode: 'always',
  });
}

export function useOutboxCounts() {
  const { outbox } = useRepositories();
  useDataInvalidation();
  return useQuery({
    queryKey: queryKeys.outbox.counts(),
    queryFn: () => outbox.counts(),
    networkMode: 'always',
  });
}
