// What the person sees of sync: online or not, when the tablet last synced, what is waiting in
// the Outbox, the progress of a long pull, and any problem in words. One small store per engine,
// read by React through useSyncExternalStore.
import type { FullRepull } from './full-repull';
import type { NewerRecordsNote } from './newer-records';
import type { LiveState } from './live-stream';
import type { SiteRemovalNote } from '../data/site-scope';

export type SyncPhase = 'idle' | 'pushing' | 'pulling' | 'waiting-to-retry' | 'blocked';

/**
 * This tab's part in syncing the tablet (tab-leadership.ts): it syncs alone (one tab, or no
 * leadership asked for), it leads the tabs, or it follows another tab that syncs.
 */
export type TabRole = 'alone' | 'leading' | 'following';

export interface SyncProgress {
  step: 'push' | 'pull';
  /** Changes sent, or records received so far. */
  done: number;
  /** Known for a push; unknown (null) for a pull, which only learns its end from `more`. */
  total: number | null;
}

export interface SyncStatus {
  /** False until the app has configured an engine (identity and enrolment are in place). */
  configured: boolean;
  online: boolean;
  phase: SyncPhase;
  lastSyncedAt: number | null;
  outboxCount: number;
  pendingCount: number;
  rejectedCount: number;
  progress: SyncProgress | null;
  /** The last problem, in words a person can act on; null when the last sync went through. */
  error: string | null;
  /** People whose session ended: their edits wait until they sign in again. */
  needsSignIn: string[];
  nextAttemptAt: number | null;
  consecutiveFailures: number;
  /** A pull from the start the server asked for: under way (finishedAt null) or the last one done. */
  fullRepull: FullRepull | null;
  /** Records from a newer build that this one keeps as they came: an update is available. */
  newerRecords: NewerRecordsNote | null;
  /** The last time records of sites this tablet no longer serves were removed from it. */
  siteRemoval: SiteRemovalNote | null;
  /** The live-changes stream: 'live' while other tablets' changes arrive without waiting. */
  live: LiveState;
  tabRole: TabRole;
}

export const INITIAL_SYNC_STATUS: SyncStatus = {
  configured: false,
  online: true,
  phase: 'idle',
  lastSyncedAt: null,
  outboxCount: 0,
  pendingCount: 0,
  rejectedCount: 0,
  progress: null,
  error: null,
  needsSignIn: [],
  nextAttemptAt: null,
  consecutiveFailures: 0,
  fullRepull: null,
  newerRecords: null,
  siteRemoval: null,
  live: 'off',
  tabRole: 'alone',
};

export class SyncStatusStore {
  private status: SyncStatus;
  private readonly listeners = new Set<() => void>();

  constructor(initial: Partial<SyncStatus> = {}) {
    this.status = { ...INITIAL_SYNC_STATUS, ...initial };
  }

  getSnapshot = (): SyncStatus => this.status;

  subscribe = (listener: () => void): (() => void) => {
    this.listeners.add(listener);
    return () => {
      this.listeners.delete(listener);
    };
  };

  update(patch: Partial<SyncStatus>): void {
    const next = { ...this.status, ...patch };
    const changed = (Object.keys(patch) as (keyof SyncStatus)[]).some(
      (key) => next[key] !== this.status[key],
    );
    if (!changed) return;
    this.status = next;
    for (const listener of [...this.listeners]) listener();
  }
}
