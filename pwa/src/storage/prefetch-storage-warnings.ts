// Reads what the storage warning needs into the query cache, so the signed-in app and the warning
// are drawn in one commit: a warning that appeared after the app pushed every screen down (a
// layout shift of 0.2 on a phone-sized Today).
import type { QueryClient } from '@tanstack/react-query';
import { getDefaultDb } from '../data/db';
import { queryKeys } from '../data/query-keys';
import { readStorageHealth } from './storage-health';
import { oldestOutboxCreatedAt } from './useOldestUnsyncedAt';

export async function prefetchStorageWarnings(queryClient: QueryClient): Promise<void> {
  await Promise.all([
    queryClient
      .ensureQueryData({ queryKey: queryKeys.device.storage(), queryFn: () => readStorageHealth() })
      .catch(() => undefined),
    queryClient
      .ensureQueryData({
        queryKey: queryKeys.outbox.oldest(),
        queryFn: () => oldestOutboxCreatedAt(getDefaultDb()),
      })
      .catch(() => undefined),
  ]);
}
