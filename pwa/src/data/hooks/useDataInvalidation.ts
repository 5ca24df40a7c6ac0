// Keeps TanStack Query in step with Dexie: every committed write (a repository's or a sync
// page's) invalidates the queries of the collections it touched, and the Outbox queries.
import { useQueryClient } from '@tanstack/react-query';
import { useEffect } from 'react';
import { subscribeDataChanges } from '../data-events';
import { queryKeys } from '../query-keys';

export function useDataInvalidation(): void {
  const queryClient = useQueryClient();
  useEffect(
    () =>
      subscribeDataChanges((change) => {
        for (const collection of change.collections) {
          void queryClient.invalidateQueries({
            queryKey: queryKeys.records.collection(collection),
          });
        }
        if (change.outbox) void queryClient.invalidateQueries({ queryKey: queryKeys.outbox.all() });
      }),
    [queryClient],
  );
}
