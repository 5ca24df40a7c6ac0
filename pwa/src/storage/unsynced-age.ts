// How long the Outbox's oldest entry has waited, and when that is too long. Edits that have not
// reached the clinic server exist only on this tablet; a browser may clear a site's storage
// (storage-health.ts), so the tablet warns on every screen once the oldest unsynced edit is older
// than the clinic's setting (`unsyncedWarningHours`, 24 hours unless an admin changes it).

export const DEFAULT_UNSYNCED_WARNING_HOURS = 24;

const MINUTE_MS = 60_000;
const HOUR_MS = 60 * MINUTE_MS;
const DAY_MS = 24 * HOUR_MS;

/**
 * How long an entry created at `createdAt` has waited at `nowMs`; 0 when the tablet's clock is
 * behind the entry (a clock set back must not hide an old edit as "in the future": the age then
 * counts from now on).
 */
export function waitedMs(createdAt: number, nowMs: number): number {
  return Math.max(0, nowMs - createdAt);
}

/**
 * True when the oldest unsynced edit has waited longer than the clinic allows. An Outbox with
 * nothing in it never warns; a setting that is not a positive number falls back to the default.
 */
export function unsyncedTooLong(
  oldestCreatedAt: number | null,
  nowMs: number,
  warningHours: number,
): boolean {
  if (oldestCreatedAt === null) return false;
  const hours =
    Number.isFinite(warningHours) && warningHours > 0
      ? warningHours
      : DEFAULT_UNSYNCED_WARNING_HOURS;
  return waitedMs(oldestCreatedAt, nowMs) > hours * HOUR_MS;
}

const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? '' : 's'}`;

/** "less than a minute", "12 minutes", "3 hours 20 minutes", "2 days 4 hours". */
export function describeWait(ms: number): string {
  if (ms < MINUTE_MS) return 'less than a minute';
  if (ms < HOUR_MS) return plural(Math.floor(ms / MINUTE_MS), 'minute');
  if (ms < DAY_MS) {
    const hours = Math.floor(ms / HOUR_MS);
    const minutes = Math.floor((ms % HOUR_MS) / MINUTE_MS);
    return minutes > 0
      ? `${plural(hours, 'hour')} ${plural(minutes, 'minute')}`
      : plural(hours, 'hour');
  }
  const days = Math.floor(ms / DAY_MS);
  const hours = Math.floor((ms % DAY_MS) / HOUR_MS);
  return hours > 0 ? `${plural(days, 'day')} ${plural(hours, 'hour')}` : plural(days, 'day');
}

/** The setting in words: "24 hours", "2 days". */
export function describeWarningHours(hours: number): string {
  return hours > 48 && hours % 24 === 0 ? plural(hours / 24, 'day') : plural(hours, 'hour');
}
