// The sync state for screens: online or not, last synced, Outbox counts, progress, error.
import { useSyncExternalStore } from 'react';
import type { SyncEngine } from './sync-engine';
import { getSyncEngine, subscribeSyncEngine, unconfiguredStatus } from './sync-runtime';
import type { SyncStatus } from './sync-status';

function currentStore(engine: SyncEngine | null) {
  return engine?.status ?? unconfiguredStatus;
}

/** Reads the given engine's status, or the app's engine when none is given. */
export function useSyncStatus(given?: SyncEngine | null): SyncStatus {
  const engine = useSyncExternalStore(subscribeSyncEngine, getSyncEngine);
  const store = currentStore(given === undefined ? engine : given);
  return useSyncExternalStore(store.subscribe, store.getSnapshot);
}
