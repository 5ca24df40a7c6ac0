// How many changes wait in the Outbox, read straight from the records database. The sync engine
// (pwa/src/sync) has no outbox-count API yet; when it exposes one, session-store.ts should take
// that instead and this file can go.

export type OutboxCounter = (authorId?: string) => Promise<number>;

export const countOutboxEntries: OutboxCounter = async (authorId) => {
  const names = await indexedDbNames();
  // Do not create the records database just to count it.
  if (names !== null && !names.includes('fuselight')) return 0;
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

async function indexedDbNames(): Promise<string[] | null> {
  if (typeof indexedDB === 'undefined' || typeof indexedDB.databases !== 'function') return null;
  const list = await indexedDB.databases();
  return list.map((d) => d.name ?? '');
}
