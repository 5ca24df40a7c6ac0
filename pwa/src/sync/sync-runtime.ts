// The app's one sync engine. The identity work configures it once the tablet is enrolled and a
// person is signed in (configureSync), and may call it again when that changes; screens read its
// state with useSyncStatus() and ask for a sync with requestSyncNow(). Attachment files waiting on
// this tablet are uploaded after every sync (on any screen, after a reconnect, after a reload):
// after the push, so the server already has the attachment record a file belongs to. The engine
// holds the live-changes stream, so another tablet's change is pulled within a second, and the
// Review desk hears when its queues move (subscribeReviewChanges). With several tabs of the app
// open, one leads, syncs and holds the live stream, and the others follow it (tab-leadership.ts,
// sync-tabs.ts); their screens stay current through the data-change relay.
import { getAttachmentDb } from '../attachments/attachment-db';
import { uploadWaitingFiles } from '../attachments/attachment-transfer';
import { relayDataChangesAcrossTabs } from '../data/data-events';
import { getDefaultDb } from '../data/db';
import { SyncEngine, type SyncEngineOptions, type SyncOutcome } from './sync-engine';
import { SyncStatusStore } from './sync-status';
import { broadcastTabChannel, syncChannelName, type TabChannel } from './sync-tabs';
import { browserLeadership, type SyncLeadership } from './tab-leadership';
import { defaultTimers } from './sync-transport';

let engine: SyncEngine | null = null;
/** What the engine's tabs share, closed with it. */
let engineTabs: { channel: TabChannel | null; stopRelay: () => void } | null = null;
const listeners = new Set<() => void>();
const reviewListeners = new Set<() => void>();
/** Shown while no engine is configured (not enrolled, or nobody has signed in yet). */
export const unconfiguredStatus = new SyncStatusStore({
  configured: false,
  error: 'Sync starts once this tablet is enrolled and someone has signed in',
});

export type AppSyncOptions = Omit<SyncEngineOptions, 'db' | 'leadership'> &
  Partial<Pick<SyncEngineOptions, 'db'>> & {
    /** How the tabs choose who syncs; default: Web Locks, else a lease (tab-leadership.ts). */
    leadership?: SyncLeadership;
  };

/** Uploads the attachment files that are due, each under its author's session. */
function attachmentUploads(options: AppSyncOptions): () => Promise<unknown> {
  const { auth, baseUrl, clock, fetch } = options;
  return () =>
    uploadWaitingFiles(getAttachmentDb(), {
      baseUrl,
      tokenFor: (authorId) => auth.tokenFor(authorId),
      ...(fetch ? { fetch } : {}),
      ...(clock ? { now: () => clock.now() } : {}),
    });
}

function closeEngineTabs(): void {
  engineTabs?.channel?.close();
  engineTabs?.stopRelay();
  engineTabs = null;
}

/** Creates (or replaces) and starts the app's sync engine; it syncs while its tab leads. */
export function configureSync(options: AppSyncOptions): SyncEngine {
  engine?.stop();
  closeEngineTabs();
  const db = options.db ?? getDefaultDb();
  const channel =
    options.tabChannel === undefined
      ? broadcastTabChannel(syncChannelName(options.deviceId))
      : options.tabChannel;
  engineTabs = { channel, stopRelay: relayDataChangesAcrossTabs() };
  engine = new SyncEngine({
    db,
    afterSync: attachmentUploads(options),
    live: true,
    onReview: () => {
      for (const listener of [...reviewListeners]) listener();
    },
    ...options,
    leadership:
      options.leadership ??
      browserLeadership(
        options.deviceId,
        db,
        options.clock ?? { now: () => Date.now() },
        options.timers ?? defaultTimers,
      ),
    tabChannel: channel,
  });
  engine.start();
  for (const listener of [...listeners]) listener();
  return engine;
}

/** Stops syncing (sign-out of the last person, tablet erased). The Outbox stays as it is. */
export function stopSync(): void {
  engine?.stop();
  engine = null;
  closeEngineTabs();
  for (const listener of [...listeners]) listener();
}

export function getSyncEngine(): SyncEngine | null {
  return engine;
}

export function subscribeSyncEngine(listener: () => void): () => void {
  listeners.add(listener);
  return () => {
    listeners.delete(listener);
  };
}

/**
 * Told when the live stream says the Review desk's queues (open Disputes, visits to countersign)
 * may have changed; the desk and its tab badge ask the server again.
 */
export function subscribeReviewChanges(listener: () => void): () => void {
  reviewListeners.add(listener);
  return () => {
    reviewListeners.delete(listener);
  };
}

/** "Sync now". Without an engine it says why nothing happens. */
export async function requestSyncNow(): Promise<SyncOutcome> {
  if (!engine) {
    return {
      kind: 'blocked',
      message: 'Sync starts once this tablet is enrolled and someone has signed in',
    };
  }
  return engine.syncNow();
}
