// Where the time of a sync went (for the first-sync benchmark), filled in by the push and the
// pull as they go.
import type { PullApplyTimings } from './local-apply';

export interface SyncTimings extends PullApplyTimings {
  /**
   * Time spent waiting for answers: the wire, and the JSON parse of a pull page that had not
   * arrived before its turn (the next page is fetched while the current one is written).
   */
  fetchMs: number;
  /** JSON parsing of answers, all of it (for prefetched pages, overlapped with writing). */
  parseMs: number;
  /** Checking pull pages (readPullResponse). */
  validateMs: number;
  pushMs: number;
  totalMs: number;
  pages: number;
  records: number;
}

export function emptyTimings(): SyncTimings {
  return {
    fetchMs: 0,
    parseMs: 0,
    validateMs: 0,
    pushMs: 0,
    readMs: 0,
    mergeMs: 0,
    writeMs: 0,
    cursorMs: 0,
    yieldMs: 0,
    totalMs: 0,
    pages: 0,
    records: 0,
  };
}
