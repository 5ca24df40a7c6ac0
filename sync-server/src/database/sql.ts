// Raw SQL on the caller's MikroORM transaction, with real bind parameters. MikroORM's own
// `execute` inlines parameters into the text; the sync hot path sends large JSON batches, so it
// goes through the same knex connection with `?` placeholders bound by the driver instead.
// Repositories use it, each on its own module's tables: only records/ touches the sync tables
// (and disputes/ its disputes and Addenda), which database/table-ownership.spec.ts checks.
import type { EntityManager } from '@mikro-orm/postgresql';

export type SqlBinding = string | number | boolean | null;

export async function sqlRows<T>(
  em: EntityManager,
  text: string,
  bindings: readonly SqlBinding[] = [],
): Promise<T[]> {
  const query = em.getKnex().raw(text, bindings);
  const trx = em.getTransactionContext<Parameters<typeof query.transacting>[0]>();
  if (trx) query.transacting(trx);
  const result = (await query) as { rows: T[] };
  return result.rows;
}

/** A batch of rows as one JSON parameter, unpacked in SQL with `jsonb_to_recordset`. */
export function jsonParam(value: unknown): string {
  return JSON.stringify(value);
}

/** A savepoint of the caller's transaction (one statement, as `savepoint "name"`). */
export async function savepoint(em: EntityManager, name: string): Promise<void> {
  await sqlRows(em, `savepoint "${name}"`);
}

/** Undoes everything since the savepoint; the savepoint stays. */
export async function rollbackToSavepoint(em: EntityManager, name: string): Promise<void> {
  await sqlRows(em, `rollback to savepoint "${name}"`);
}

/** Forgets the savepoint, keeping what was done since. */
export async function releaseSavepoint(em: EntityManager, name: string): Promise<void> {
  await sqlRows(em, `release savepoint "${name}"`);
}
