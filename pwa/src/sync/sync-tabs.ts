// What the tabs of the app on one tablet tell each other about sync (tab-leadership.ts says which
// one leads). The leader sends its status after every change, so a following tab's bar and
// Outbox counts show what the leader does; a following tab's "Sync now" asks the leader to sync
// and gets the outcome back. Records themselves need no message: every tab reads the same
// IndexedDB, and data-events.ts relays "this changed" across tabs so the screens re-read it.
import type { SyncOutcome } from './sync-engine';
import type { SyncStatus } from './sync-status';

export type TabMessage =
  /** The leader's status after a change. */
  | { kind: 'status'; status: SyncStatus }
  /** A tab that just began to lead: followers send their unanswered "Sync now" again. */
  | { kind: 'leading' }
  /** A follower started and would like the leader's status now. */
  | { kind: 'status-wanted' }
  /** A follower's "Sync now". */
  | { kind: 'sync-now'; requestId: string }
  /** The leader's answer to one "Sync now". */
  | { kind: 'outcome'; requestId: string; outcome: SyncOutcome }
  /** The leader's live stream said the Review desk's queues may have changed. */
  | { kind: 'review' };

/** A message channel to the app's other tabs (a BroadcastChannel, or an in-memory one in tests). */
export interface TabChannel {
  post(message: TabMessage): void;
  subscribe(listener: (message: TabMessage) => void): () => void;
  close(): void;
}

/** The channel name of one tablet's sync messages. */
export function syncChannelName(deviceId: string): string {
  return `fuselight-sync-tabs:${deviceId}`;
}

/** A BroadcastChannel to the other tabs of this origin; null where the browser has none. */
export function broadcastTabChannel(name: string): TabChannel | null {
  if (typeof BroadcastChannel !== 'function') return null;
  const channel = new BroadcastChannel(name);
  const listeners = new Set<(message: TabMessage) => void>();
  channel.onmessage = (event: MessageEvent<TabMessage>) => {
    for (const listener of [...listeners]) listener(event.data);
  };
  return {
    post: (message) => channel.postMessage(message),
    subscribe(listener) {
      listeners.add(listener);
      return () => {
        listeners.delete(listener);
      };
    },
    close: () => {
      listeners.clear();
      channel.close();
    },
  };
}
