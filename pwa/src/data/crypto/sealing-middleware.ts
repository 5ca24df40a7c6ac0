// The sealing layer of a Dexie database: a DBCore middleware at the bottom of the stack, so every
// repository, the sync engine's pull and push, the Outbox transitions and the patient directory
// read and write plain values while IndexedDB holds only sealed ones (value-codec.ts).
//
// WebCrypto is asynchronous and IndexedDB commits a transaction as soon as it has no request
// waiting, so while a value is being sealed or opened the layer keeps the transaction alive with
// cheap reads of a key that cannot exist (as Dexie.waitFor does), and hands the result back inside
// a request's success callback, where the transaction is active again for the caller's next step.
//
// Values without a sealed box are passed through as they are: a database written before the
// tablet was protected is readable until sealInPlace (seal-in-place.ts) has rewritten it. A value
// that fails authentication is reported to the vault in words and left out of the answer (as if
// absent), so nothing else is lost and a pull can bring a good copy.
import type {
  DBCore,
  DBCoreGetManyRequest,
  DBCoreGetRequest,
  DBCoreMutateRequest,
  DBCoreQueryRequest,
  DBCoreTable,
  DBCoreTransaction,
  Middleware,
} from 'dexie';
import type { DataKeyVault } from './data-key-vault';
import {
  additionalData,
  DamagedValueError,
  isSealed,
  openValue,
  sealValue,
  type TableSealing,
} from './value-codec';

/** Runs `work` while keeping `trans` alive; settles inside a success callback of `trans`. */
export function keepingAlive<T>(
  trans: DBCoreTransaction,
  storeName: string,
  work: Promise<T>,
): Promise<T> {
  const idbTrans = trans as unknown as IDBTransaction;
  let outcome: { ok: true; value: T } | { ok: false; error: unknown } | null = null;
  work.then(
    (value) => {
      outcome = { ok: true, value };
    },
    (error: unknown) => {
      outcome = { ok: false, error };
    },
  );
  return new Promise<T>((resolve, reject) => {
    let store: IDBObjectStore;
    try {
      store = idbTrans.objectStore(storeName);
    } catch {
      // Not an IndexedDB transaction (or already finished): nothing to keep alive.
      work.then(resolve, reject);
      return;
    }
    const spin = (): void => {
      const done = outcome as { ok: true; value: T } | { ok: false; error: unknown } | null;
      if (done) {
        if (done.ok) resolve(done.value);
        else reject(done.error);
        return;
      }
      try {
        const request = store.get(-Infinity);
        request.onsuccess = spin;
        request.onerror = () => reject(request.error);
      } catch (error) {
        // The transaction ended under us (aborted elsewhere): say so when the work is done.
        work.then(() => reject(error), reject);
      }
    };
    spin();
  });
}

function keyPathValue(value: Record<string, unknown>, keyPath: string | string[] | null): unknown {
  if (keyPath === null) return null;
  if (Array.isArray(keyPath)) return keyPath.map((path) => value[path]);
  return value[keyPath];
}

function describeKey(key: unknown): string {
  return Array.isArray(key) ? key.join(' ') : String(key);
}

export function sealingMiddleware(
  vault: DataKeyVault,
  tables: Readonly<Record<string, TableSealing>>,
): Middleware<DBCore> {
  return {
    stack: 'dbcore',
    name: 'Sealing',
    // Below Dexie's own middlewares (-1, 0) and the patient directory (10): they all see plain values.
    level: -2,
    create: (down) => ({
      ...down,
      table: (name) => {
        const table = down.table(name);
        const spec = tables[name];
        return spec ? sealedTable(table, spec, vault) : table;
      },
    }),
  };
}

function sealedTable(table: DBCoreTable, spec: TableSealing, vault: DataKeyVault): DBCoreTable {
  const keyPath = table.schema.primaryKey.keyPath as string | string[] | null;
  const name = table.name;

  async function openOne(raw: unknown, trans: DBCoreTransaction): Promise<unknown> {
    if (!isSealed(raw)) return raw;
    const key = vault.keyForReading();
    const primaryKey = keyPathValue(raw, keyPath);
    try {
      return await openValue(key, spec, additionalData(name, primaryKey), raw);
    } catch (error) {
      if (!(error instanceof DamagedValueError)) throw error;
      vault.reportDamaged({
        database: (trans as unknown as IDBTransaction).db?.name ?? '',
        table: name,
        key: describeKey(primaryKey),
        at: Date.now(),
      });
      return undefined;
    }
  }

  function forgetReplaced(req: DBCoreMutateRequest): void {
    const keys: unknown[] =
      req.type === 'delete'
        ? [...req.keys]
        : req.type === 'add' || req.type === 'put'
          ? req.values.map((value, index) =>
              keyPath === null ? req.keys?.[index] : keyPathValue(value, keyPath),
            )
          : [];
    if (keys.length === 0) return;
    const database = (req.trans as unknown as IDBTransaction).db?.name ?? '';
    // Forgotten once the write commits; a write that fails leaves the report as it was.
    const done = () => vault.forgetDamaged(database, name, keys.map(describeKey));
    const idb = req.trans as unknown as IDBTransaction;
    if (typeof idb.addEventListener === 'function') idb.addEventListener('complete', done);
    else done();
  }

  function openMany(rows: readonly unknown[], trans: DBCoreTransaction): Promise<unknown[]> | null {
    if (!rows.some(isSealed)) return null;
    return keepingAlive(trans, name, Promise.all(rows.map((row) => openOne(row, trans))));
  }

  return {
    ...table,
    mutate: (req: DBCoreMutateRequest) => {
      // A value written or deleted over a damaged one replaces it: it is no longer reported.
      if (vault.damagedValues().length > 0) forgetReplaced(req);
      if (req.type !== 'add' && req.type !== 'put') return table.mutate(req);
      const key = vault.keyForWriting();
      if (!key) return table.mutate(req);
      const values = req.values as Array<Record<string, unknown>>;
      const sealing = Promise.all(
        values.map((value, index) => {
          const primaryKey = keyPath === null ? req.keys?.[index] : keyPathValue(value, keyPath);
          return sealValue(key, spec, additionalData(name, primaryKey), value);
        }),
      );
      return keepingAlive(req.trans, name, sealing).then((sealed) =>
        table.mutate({ ...req, values: sealed } as DBCoreMutateRequest),
      );
    },
    get: (req: DBCoreGetRequest) =>
      table.get(req).then((raw) => {
        if (!isSealed(raw)) return raw;
        return keepingAlive(req.trans, name, openOne(raw, req.trans));
      }),
    getMany: (req: DBCoreGetManyRequest) =>
      table.getMany(req).then((rows) => openMany(rows, req.trans) ?? rows),
    query: (req: DBCoreQueryRequest) =>
      table.query(req).then((res) => {
        if (!req.values) return res;
        const opening = openMany(res.result, req.trans);
        if (!opening) return res;
        return opening.then((result) => ({
          ...res,
          // A damaged value is left out of a list (reported to the vault).
          result: result.filter((row) => row !== undefined),
        }));
      }),
    openCursor: (req) =>
      table.openCursor(req).then((cursor) => {
        if (!cursor || !req.values) return cursor;
        // A cursor's value is read synchronously; a sealed one cannot be opened there. The
        // repositories read these tables with whole-range queries instead (toArray, not filter).
        return new Proxy(cursor, {
          get(target, prop) {
            const got: unknown = Reflect.get(target, prop, target);
            if (prop === 'value' && isSealed(got)) {
              throw new Error(
                `The ${name} table is sealed: read it with a query (toArray), not a cursor (filter or each)`,
              );
            }
            return typeof got === 'function'
              ? (got as (...a: unknown[]) => unknown).bind(target)
              : got;
          },
        });
      }),
  };
}
