// Records from a newer build arrived: look for the new version of the app now rather than at the
// next start, so UpdatePrompt can offer it. Runs in the signed-in app, where the sync engine is.
import { useEffect } from 'react';
import { lookForAppUpdate } from '../app/app-update';
import { useSyncStatus } from '../sync/useSyncStatus';

export function NewerRecordsUpdateCheck() {
  const newerRecords = useSyncStatus().newerRecords !== null;
  useEffect(() => {
    if (newerRecords) void lookForAppUpdate();
  }, [newerRecords]);
  return null;
}
