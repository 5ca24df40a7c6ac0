// The app's one sync engine. The identity work configures it once the tablet is enrolled and a
// person is signed in (configureSync), and may call it again when that changes; screens read its
// state with useSyncStatus() and ask for a sync with requestSyncNow().
import { getDefaultDb } from '../data/db';
import { SyncEngine, type SyncEngineOptions, type SyncOutcome } from './sync-engine';
import { SyncStatusStore } from './sync-status';

let engine: SyncEngine | null = null;
const listeners = new Set<() => void>();
/** Shown while no engine is configured (not enrolled, or nobody has signed in yet). */
export const unconfiguredStatus = new SyncStatusStore({
  configured: false,
  error: 'Sync starts once this tablet is enrolled and someone has signed in',
});

export type AppSyncOptions = Omit<SyncEngineOptions, 'db'> & Partial<Pick<SyncEngineOptions, 'db'>>;

/** Creates (or replaces) and starts the app's sync engine. */
export function configureSync(options: AppSyncOptions): SyncEngine {
  engine?.stop();
  engine = new SyncEngine({ db: getDefaultDb(), ...options });
  engine.start();
  for (const listener of [...listeners]) listener();
  return engine;
}

/** Stops syncing (sign-out of the last person, tablet erased). The Outbox stays as it is. */
export function stopSync(): void {
  engine?.stop();
  engine = null;
  for (const listener of [...listeners]) listener();
}

export function getSyncEngine(): SyncEngine | null {
  return engine;
}

export function subscribeSyncEngine(listener: () => void): () => void {
  listeners.add(listener);
  return () => {
    listeners.delete(listener);
  };
}

/** "Sync now". Without an engine it says why nothing happens. */
export async function requestSyncNow(): Promise<SyncOutcome> {
  if (!engine) {
    return {
      kind: 'blocked',
      message: 'Sync starts once this tablet is enrolled and someone has signed in',
    };
  }
  return engine.syncNow();
}
