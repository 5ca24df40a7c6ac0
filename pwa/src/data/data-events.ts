// Tells the screens' queries that Dexie changed: after every committed write of a repository and
// after every page the sync engine stores. Hooks subscribe and invalidate their query keys.
import type { CollectionName } from '@fuselight/shared';

export interface DataChange {
  /** Collections whose records changed; empty when only the outbox or the sync state did. */
  collections: CollectionName[];
  /** Record ids that changed, when known (a sync page may list many). */
  recordIds?: string[];
  /** True when outbox entries were added, changed or removed. */
  outbox: boolean;
}

type Listener = (change: DataChange) => void;

const listeners = new Set<Listener>();

export function subscribeDataChanges(listener: Listener): () => void {
  listeners.add(listener);
  return () => {
    listeners.delete(listener);
  };
}

export function notifyDataChange(change: DataChange): void {
  for (const listener of [...listeners]) {
    try {
      listener(change);
    } catch {
      // A screen's listener failing must not stop the others or the write that already committed.
    }
  }
}
