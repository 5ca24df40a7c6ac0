// For tests: fake-indexeddb made to refuse writes as a browser does when the site's storage is
// full (a DOMException named QuotaExceededError from put/add). Undo with vi.restoreAllMocks().
import { vi } from 'vitest';

/** Makes the next writes to one object store throw what a browser throws when storage is full. */
export function refuseWritesForQuota(storeName: string, times = 1) {
  const proto = globalThis.IDBObjectStore.prototype;
  let left = times;
  for (const method of ['put', 'add'] as const) {
    const original = proto[method];
    vi.spyOn(proto, method).mockImplementation(function (this: IDBObjectStore, ...args) {
      if (this.name === storeName && left > 0) {
        left -= 1;
        throw new DOMException('The quota has been exceeded.', 'QuotaExceededError');
      }
      return (original as (...a: unknown[]) => IDBRequest).apply(this, args);
    });
  }
}
