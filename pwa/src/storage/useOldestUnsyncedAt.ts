// When the oldest Outbox entry was made (epoch ms), or null when nothing waits: read from the
// Outbox's createdAt index alone (no value is read, so it works on a locked protected tablet and
// needs none of the repositories' code). The app-wide storage warning runs it on every screen,
// the signed-out shell included, so it stays this light.
import { useQuery } from '@tanstack/react-query';
import { databaseMayHoldData } from '../data/database-exists';
import { getDefaultDb, type FuselightDb } from '../data/db';
import { useDataInvalidation } from '../data/hooks/useDataInvalidation';
import { queryKeys } from '../data/query-keys';

export async function oldestOutboxCreatedAt(db: FuselightDb): Promise<number | null> {
  // A tablet without the records database has nothing waiting: do not create it here.
  if (!(await databaseMayHoldData(db))) return null;
  const [first] = await db.outbox.orderBy('createdAt').limit(1).keys();
  return typeof first === 'number' ? first : null;
}

/** The query of the oldest Outbox entry's time (the hook's, and the prefetch before first draw). */
export const oldestUnsyncedQuery = (db: () => FuselightDb = getDefaultDb) => ({
  queryKey: queryKeys.outbox.oldest(),
  queryFn: () => oldestOutboxCreatedAt(db()),
});

export function useOldestUnsyncedAt(db: () => FuselightDb = getDefaultDb) {
  useDataInvalidation();
  return useQuery({ ...oldestUnsyncedQuery(db), networkMode: 'always' });
}
