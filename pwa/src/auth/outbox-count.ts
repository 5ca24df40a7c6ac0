// How many changes wait in the Outbox, read straight from the records database. The sync engine
// (pwa/src/sync) has no outbox-count API yet; when it exposes one, session-store.ts should take
// that instead and this file can go.

import { databaseMayExist } from '../data/database-exists';

export type OutboxCounter = (authorId?: string) => Promise<number>;

export const countOutboxEntries: OutboxCounter = async (authorId) => {
  // Do not create the records database just to count it.
  if (!(await databaseMayExist('fuselight'))) return 0;
  // Loaded here, not up front: sign-in does not need the records database's code.
  const { FuselightDb } = await import('../data/db');
  const db = new FuselightDb();
  try {
    return authorId === undefined
      ? await db.outbox.count()
      : await db.outbox.where('authorId').equals(authorId).count();
  } finally {
    db.close();
  }
};
