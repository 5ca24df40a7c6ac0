// Sealing a database written before the tablet was protected: every value of the sealed tables
// is read and written back through the sealing layer, in chunks, each chunk in its own
// transaction. A value is never removed, only rewritten, so an interruption leaves a mix of
// sealed and clear values that reads correctly and is finished by the next run.
import type Dexie from 'dexie';

const CHUNK = 500;

export interface SealProgress {
  table: string;
  done: number;
  total: number;
}

export async function sealInPlace(
  db: Dexie,
  tables: readonly string[],
  onProgress: (progress: SealProgress) => void = () => undefined,
): Promise<number> {
  let rewritten = 0;
  for (const name of tables) {
    const table = db.table(name);
    const keys = await table.toCollection().primaryKeys();
    for (let from = 0; from < keys.length; from += CHUNK) {
      const chunk = keys.slice(from, from + CHUNK);
      await db.transaction('rw', table, async () => {
        const rows = (await table.bulkGet(chunk)).filter((row) => row !== undefined);
        await table.bulkPut(rows);
        rewritten += rows.length;
      });
      onProgress({ table: name, done: Math.min(from + CHUNK, keys.length), total: keys.length });
    }
  }
  return rewritten;
}
