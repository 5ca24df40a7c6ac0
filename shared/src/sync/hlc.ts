// The hybrid logical clock every device keeps (docs/sync-protocol.md, "Hybrid logical clock").
// Source: S. Kulkarni, M. Demirbas, D. Madappa, B. Avva, M. Leone, "Logical Physical Clocks",
// OPODIS 2014 (the HLC send/local and receive rules, Fig. 5). Pure: the caller passes the time.
//
// A stamp is `<wall ms, 15 digits>-<counter, 5 digits>-<device id>`. Both numbers are fixed
// width, so comparing two stamps as strings gives the same order as comparing
// (wall, counter, device id) as a tuple.

/** A stamp whose wall part is more than this far ahead of server time comes from a broken clock. */
export const MAX_CLOCK_AHEAD_MS = 24 * 60 * 60 * 1000;
/** Largest wall time a stamp can carry (15 decimal digits; still an exact JS integer). */
export const MAX_STAMP_WALL_MS = 999_999_999_999_999;
/** Largest counter a stamp can carry (5 decimal digits). */
export const MAX_STAMP_COUNTER = 99_999;

const STAMP_PATTERN = /^(\d{15})-(\d{5})-(.+)$/;

/** A device's clock state: the greatest (wall, counter) it has issued or seen. */
export interface HlcClock {
  readonly deviceId: string;
  readonly wallMs: number;
  readonly counter: number;
}

/** The three parts of a stamp. */
export interface HlcStampParts {
  readonly wallMs: number;
  readonly counter: number;
  readonly deviceId: string;
}

/** A stamp that cannot be read or written; the message names what is wrong. */
export class HlcStampError extends Error {
  override readonly name = 'HlcStampError';
}

function assertDeviceId(deviceId: string): void {
  if (typeof deviceId !== 'string' || deviceId.length === 0) {
    throw new HlcStampError('an HLC device id must be a non-empty string');
  }
  if (/[\r\n]/.test(deviceId)) {
    throw new HlcStampError('an HLC device id cannot contain a line break');
  }
}

function assertWall(wallMs: number, what: string): void {
  if (!Number.isSafeInteger(wallMs) || wallMs < 0 || wallMs > MAX_STAMP_WALL_MS) {
    throw new HlcStampError(
      `${what} must be a whole number of ms between 0 and ${MAX_STAMP_WALL_MS}, got ${wallMs}`,
    );
  }
}

export function createClock(deviceId: string): HlcClock {
  assertDeviceId(deviceId);
  return { deviceId, wallMs: 0, counter: 0 };
}

export function formatStamp(parts: HlcStampParts): string {
  assertWall(parts.wallMs, 'the wall part of a stamp');
  if (
    !Number.isSafeInteger(parts.counter) ||
    parts.counter < 0 ||
    parts.counter > MAX_STAMP_COUNTER
  ) {
    throw new HlcStampError(
      `the counter of a stamp must be between 0 and ${MAX_STAMP_COUNTER}, got ${parts.counter}`,
    );
  }
  assertDeviceId(parts.deviceId);
  return `${String(parts.wallMs).padStart(15, '0')}-${String(parts.counter).padStart(5, '0')}-${parts.deviceId}`;
}

/** Reads a stamp, or null when it is not `<15 digits>-<5 digits>-<device id>`. */
export function tryParseStamp(stamp: unknown): HlcStampParts | null {
  if (typeof stamp !== 'string') return null;
  const match = STAMP_PATTERN.exec(stamp);
  if (!match) return null;
  const [, wall, counter, deviceId] = match as unknown as [string, string, string, string];
  if (/[\r\n]/.test(deviceId)) return null;
  return { wallMs: Number(wall), counter: Number(counter), deviceId };
}

export function parseStamp(stamp: string): HlcStampParts {
  const parts = tryParseStamp(stamp);
  if (!parts) {
    throw new HlcStampError(
      `"${String(stamp).slice(0, 80)}" is not an HLC stamp <15-digit wall ms>-<5-digit counter>-<device id>`,
    );
  }
  return parts;
}

export function isStamp(value: unknown): value is string {
  return tryParseStamp(value) !== null;
}

/** Negative, zero or positive as `a` is before, the same as, or after `b`. */
export function compareStamps(a: string, b: string): number {
  // Fixed-width numbers make string order the tuple order (wall, counter, device id).
  return a < b ? -1 : a > b ? 1 : 0;
}

/**
 * When the counter would pass five digits (more than 99 999 events within one millisecond of
 * wall time), the clock moves its wall part one millisecond ahead instead of failing: stamps
 * stay strictly increasing and the format stays fixed; the drift is one ms per 100 000 events.
 */
function normalise(deviceId: string, wallMs: number, counter: number): HlcClock {
  if (counter > MAX_STAMP_COUNTER) {
    const next = wallMs + 1;
    assertWall(next, 'the clock');
    return { deviceId, wallMs: next, counter: 0 };
  }
  return { deviceId, wallMs, counter };
}

/** A local event (an edit): the paper's send/local rule. Returns the new clock and its stamp. */
export function tick(clock: HlcClock, nowMs: number): { clock: HlcClock; stamp: string } {
  assertWall(nowMs, 'the current time');
  const wallMs = Math.max(clock.wallMs, Math.floor(nowMs));
  const counter = wallMs === clock.wallMs ? clock.counter + 1 : 0;
  const next = normalise(clock.deviceId, wallMs, counter);
  return { clock: next, stamp: formatStamp(next) };
}

/**
 * Advances the clock past a stamp seen in a pull: the paper's receive rule. The clock afterwards
 * is greater than both its old state and the received stamp, so the next tick is too. Callers
 * check `isStampTooFarAhead` first if they want to refuse a broken clock's stamp.
 */
export function receive(clock: HlcClock, stamp: string, nowMs: number): HlcClock {
  assertWall(nowMs, 'the current time');
  const remote = parseStamp(stamp);
  const now = Math.floor(nowMs);
  const wallMs = Math.max(clock.wallMs, remote.wallMs, now);
  let counter: number;
  if (wallMs === clock.wallMs && wallMs === remote.wallMs) {
    counter = Math.max(clock.counter, remote.counter) + 1;
  } else if (wallMs === clock.wallMs) {
    counter = clock.counter + 1;
  } else if (wallMs === remote.wallMs) {
    counter = remote.counter + 1;
  } else {
    counter = 0;
  }
  return normalise(clock.deviceId, wallMs, counter);
}

/** True when the stamp's wall part is more than MAX_CLOCK_AHEAD_MS ahead of `nowMs`. */
export function isStampTooFarAhead(stamp: string, nowMs: number): boolean {
  return parseStamp(stamp).wallMs > nowMs + MAX_CLOCK_AHEAD_MS;
}
