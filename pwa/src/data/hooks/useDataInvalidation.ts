// Keeps TanStack Query in step with Dexie: every committed write (a repository's or a sync
// page's) re-runs the queries that could see what it wrote (data/query-invalidation.ts), and the
// Outbox queries when the Outbox changed. One listener per query client, however many hooks
// ask for it, so a write is acted on once.
import { type QueryClient, useQueryClient } from '@tanstack/react-query';
import { useEffect } from 'react';
import { subscribeDataChanges } from '../data-events';
import { invalidateForChange } from '../query-invalidation';

const listening = new WeakMap<QueryClient, { users: number; stop: () => void }>();

function listen(queryClient: QueryClient): () => void {
  let entry = listening.get(queryClient);
  if (!entry) {
    entry = {
      users: 0,
      stop: subscribeDataChanges((change) => invalidateForChange(queryClient, change)),
    };
    listening.set(queryClient, entry);
  }
  entry.users += 1;
  const current = entry;
  return () => {
    current.users -= 1;
    if (current.users === 0) {
      current.stop();
      listening.delete(queryClient);
    }
  };
}

export function useDataInvalidation(): void {
  const queryClient = useQueryClient();
  useEffect(() => listen(queryClient), [queryClient]);
}
