// An optional observer of pushes: the time each step of a push took, handed over once the push
// has committed. The push benchmark (sync/bench) observes them for its breakdown; the default
// observer does nothing, and the service keeps no timings of its own.
export const PUSH_OBSERVER = Symbol('PUSH_OBSERVER');

/** Milliseconds spent in each step of one push. */
export interface PushTimings {
  envelopeMs: number;
  beginMs: number;
  earlierMs: number;
  lockMs: number;
  planMs: number;
  writeMs: number;
  logMs: number;
  commitMs: number;
}

export interface PushObserver {
  /** Called after each push that committed, with its own step timings. */
  pushed(timings: Readonly<PushTimings>): void;
}

export const noPushObserver: PushObserver = { pushed: () => undefined };

export function emptyPushTimings(): PushTimings {
  return {
    envelopeMs: 0,
    beginMs: 0,
    earlierMs: 0,
    lockMs: 0,
    planMs: 0,
    writeMs: 0,
    logMs: 0,
    commitMs: 0,
  };
}
