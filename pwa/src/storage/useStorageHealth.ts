// The browser's word on this site's storage (storage-health.ts), read again every minute.
import { useQuery } from '@tanstack/react-query';
import { queryKeys } from '../data/query-keys';
import { readStorageHealth } from './storage-health';

export const LOOK_AGAIN_MS = 60_000;

/** The query of the browser's word on storage (the hook's, and the prefetch before first draw). */
export const storageHealthQuery = () => ({
  queryKey: queryKeys.device.storage(),
  queryFn: () => readStorageHealth(),
});

export function useStorageHealth() {
  return useQuery({
    ...storageHealthQuery(),
    refetchInterval: LOOK_AGAIN_MS,
    networkMode: 'always',
  });
}
