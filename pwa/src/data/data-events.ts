// Tells the screens' queries that Dexie changed: after every committed write of a repository and
// after every page the sync engine stores. Hooks subscribe and invalidate their query keys.
// Several tabs of the app share one IndexedDB: once relayDataChangesAcrossTabs() runs (the app
// starts it with sync), each change made here is also announced to the other tabs, and theirs to
// this one, so a tab that follows another's sync (sync/tab-leadership.ts) shows what it stored.
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

function deliver(change: DataChange): void {
  for (const listener of [...listeners]) {
    try {
      listener(change);
    } catch {
      // A screen's listener failing must not stop the others or the write that already committed.
    }
  }
}

export function notifyDataChange(change: DataChange): void {
  deliver(change);
  relay?.channel.postMessage(change);
}

/** The channel name the tabs of one origin announce their changes on. */
export const DATA_CHANGES_CHANNEL = 'fuselight-data-changes';

let relay: { channel: BroadcastChannel; users: number } | null = null;

/**
 * Announces this tab's changes to the app's other tabs and delivers theirs here (each change
 * once: a tab does not hear its own messages). Returns the stop; the relay closes with its last
 * user. Does nothing where the browser has no BroadcastChannel.
 */
export function relayDataChangesAcrossTabs(name = DATA_CHANGES_CHANNEL): () => void {
  if (typeof BroadcastChannel !== 'function') return () => undefined;
  if (!relay) {
    const channel = new BroadcastChannel(name);
    channel.onmessage = (event: MessageEvent<DataChange>) => deliver(event.data);
    relay = { channel, users: 0 };
  }
  relay.users += 1;
  const current = relay;
  let stopped = false;
  return () => {
    if (stopped) return;
    stopped = true;
    current.users -= 1;
    if (current.users === 0) {
      current.channel.close();
      if (relay === current) relay = null;
    }
  };
}
