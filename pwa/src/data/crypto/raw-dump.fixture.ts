// Test support: every value of every store of an IndexedDB database read raw (no Dexie, no
// sealing layer), as one text in which binary fields appear decoded as UTF-8, so a test can
// search it for a name that must not be there.
export async function rawDump(databaseName: string): Promise<{ text: string; stores: string[] }> {
  const db = await new Promise<IDBDatabase>((resolve, reject) => {
    const request = indexedDB.open(databaseName);
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => reject(request.error);
  });
  try {
    const stores = [...db.objectStoreNames];
    const parts: string[] = [];
    for (const store of stores) {
      const values = await new Promise<unknown[]>((resolve, reject) => {
        const request = db.transaction(store).objectStore(store).getAll();
        request.onsuccess = () => resolve(request.result as unknown[]);
        request.onerror = () => reject(request.error);
      });
      parts.push(`## ${store}\n${values.map(textOf).join('\n')}`);
    }
    return { text: parts.join('\n'), stores };
  } finally {
    db.close();
  }
}

const decoder = new TextDecoder('utf-8', { fatal: false });

function textOf(value: unknown): string {
  if (value instanceof ArrayBuffer) return decoder.decode(new Uint8Array(value));
  if (ArrayBuffer.isView(value)) {
    return decoder.decode(new Uint8Array(value.buffer, value.byteOffset, value.byteLength));
  }
  if (Array.isArray(value)) return `[${value.map(textOf).join(',')}]`;
  if (typeof value === 'object' && value !== null) {
    return `{${Object.entries(value)
      .map(([key, item]) => `${key}:${textOf(item)}`)
      .join(',')}}`;
  }
  return String(value);
}

/** Flips one byte of a sealed value's ciphertext in place, raw (no Dexie). */
export async function flipSealedByte(
  databaseName: string,
  store: string,
  key: IDBValidKey,
): Promise<void> {
  const db = await new Promise<IDBDatabase>((resolve, reject) => {
    const request = indexedDB.open(databaseName);
    request.onsuccess = () => resolve(request.result);
    request.onerror = () => reject(request.error);
  });
  try {
    await new Promise<void>((resolve, reject) => {
      const tx = db.transaction(store, 'readwrite');
      const objectStore = tx.objectStore(store);
      const get = objectStore.get(key);
      get.onsuccess = () => {
        const value = get.result as { __sealed: { data: ArrayBuffer } };
        const bytes = new Uint8Array(value.__sealed.data.slice(0));
        bytes[Math.floor(bytes.length / 2)]! ^= 0x01;
        value.__sealed.data = bytes.buffer;
        objectStore.put(value);
      };
      tx.oncomplete = () => resolve();
      tx.onerror = () => reject(tx.error);
    });
  } finally {
    db.close();
  }
}
