// What the tablet warns about its storage, for the app-wide banner and the You screen: the
// oldest unsynced edit against the clinic's setting, persistent storage refused, and a storage
// nearly full. Read again every minute, and at once when the Outbox changes.
import { useEffect, useState } from 'react';
import { useTabletPolicy } from '../auth/SessionProvider';
import { useSession } from '../auth/session-context';
import type { StorageHealth } from './storage-health';
import { unsyncedTooLong, waitedMs } from './unsynced-age';
import { useOldestUnsyncedAt } from './useOldestUnsyncedAt';
import { LOOK_AGAIN_MS, useStorageHealth } from './useStorageHealth';

/** The time now, moved on every `everyMs`. */
export function useNow(everyMs = LOOK_AGAIN_MS): number {
  const [now, setNow] = useState(() => Date.now());
  useEffect(() => {
    const timer = setInterval(() => setNow(Date.now()), everyMs);
    return () => clearInterval(timer);
  }, [everyMs]);
  return now;
}

export interface StorageWarnings {
  /** The oldest unsynced edit has waited longer than the clinic allows. */
  unsynced: { waitedMs: number; warningHours: number } | null;
  /** An enrolled tablet whose browser did not grant persistent storage. */
  persistenceRefused: boolean;
  /** The storage is at or above 80 % of its quota. */
  nearlyFull: StorageHealth | null;
}

export function useStorageWarnings(): StorageWarnings {
  const { deviceId } = useSession();
  const policy = useTabletPolicy();
  const oldest = useOldestUnsyncedAt();
  const health = useStorageHealth();
  const now = useNow();
  const oldestCreatedAt = oldest.data ?? null;
  const warningHours = policy.unsyncedWarningHours;
  return {
    unsynced:
      oldestCreatedAt !== null && unsyncedTooLong(oldestCreatedAt, now, warningHours)
        ? { waitedMs: waitedMs(oldestCreatedAt, now), warningHours }
        : null,
    persistenceRefused: deviceId !== null && health.data?.persisted === false,
    nearlyFull: health.data?.nearlyFull ? health.data : null,
  };
}
