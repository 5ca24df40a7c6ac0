// Whether an IndexedDB database is already on this tablet, asked without opening it: opening
// creates it, and creating the records database (every table and index) is the largest piece of
// work a fresh tablet's first screen would otherwise do before anyone has signed in.

/**
 * False only when the browser lists its databases and `name` is not among them; true when it is,
 * or when the browser cannot say (then the caller opens the database as before).
 */
export async function databaseMayExist(name: string): Promise<boolean> {
  if (typeof indexedDB === 'undefined' || typeof indexedDB.databases !== 'function') return true;
  try {
    const list = await indexedDB.databases();
    return list.some((database) => database.name === name);
  } catch {
    return true;
  }
}

/**
 * Whether reading the given database could find anything: true when it is open here, otherwise
 * as `databaseMayExist`. A caller that would only read skips the read when false, so that
 * reading does not create the database.
 */
export async function databaseMayHoldData(db: {
  readonly name: string;
  isOpen(): boolean;
}): Promise<boolean> {
  return db.isOpen() || databaseMayExist(db.name);
}
