// Exponential back-off with "equal jitter" (half fixed, half random), so that tablets coming back
// on the network together do not retry in lockstep.
export interface BackoffPolicy {
  baseMs: number;
  maxMs: number;
}

export const DEFAULT_BACKOFF: BackoffPolicy = { baseMs: 2_000, maxMs: 5 * 60_000 };

/** Delay before retry number `failures` (1 for the first retry); `random` in [0, 1). */
export function backoffDelay(
  failures: number,
  random: () => number,
  policy: BackoffPolicy = DEFAULT_BACKOFF,
): number {
  const exponent = Math.max(0, Math.min(failures - 1, 30));
  const ceiling = Math.min(policy.maxMs, policy.baseMs * 2 ** exponent);
  return Math.round(ceiling / 2 + (ceiling / 2) * random());
}
