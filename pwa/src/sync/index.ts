// The tablet's sync engine and its state for screens.
export type { SyncAuth } from './sync-auth';
export {
  SyncEngine,
  type NetworkMonitor,
  type SyncClock,
  type SyncEngineOptions,
  type SyncOutcome,
  type SyncTimers,
  type SyncTimings,
} from './sync-engine';
export {
  SyncStatusStore,
  type SyncPhase,
  type SyncProgress,
  type SyncStatus,
  type TabRole,
} from './sync-status';
export { backoffDelay, DEFAULT_BACKOFF, type BackoffPolicy } from './backoff';
export { LIVE_BACKOFF, LiveStream, type LiveState } from './live-stream';
export {
  configureSync,
  getSyncEngine,
  requestSyncNow,
  stopSync,
  subscribeReviewChanges,
  subscribeSyncEngine,
  type AppSyncOptions,
} from './sync-runtime';
export { useSyncStatus } from './useSyncStatus';
export { describeFullRepull, type FullRepull, type FullRepullReason } from './full-repull';
export {
  describeNewerRecords,
  UPDATE_AVAILABLE_SHORT,
  type NewerRecordsNote,
} from './newer-records';
