// A full re-pull: the server asked this tablet to pull again from the start (its cursor is behind
// the tombstone horizon, was handed out before the server's cursor epoch, when pull pages could
// skip records, or is above what a restore of the server from a backup kept). Nothing local is dropped: the Outbox and every pending edit stay, and
// what arrives merges as in any pull (local-apply.ts). The state is kept in `meta` so a re-pull
// cut short by a reload or a lost network still shows as under way, and its end is recorded.
import { PULL_RESET_REASONS, type PullResetReason } from '@fuselight/shared';
import type { FuselightDb } from '../data/db';
import { CURSOR_KEY } from './local-apply';
import { formatCount } from './format-count';

export const FULL_REPULL_KEY = 'fullRepull';

/**
 * The tablet's own reasons: `site-returned`, a site it had stopped serving was given back;
 * `damaged`, a stored record failed authentication and a good copy is fetched.
 */
export type FullRepullReason = PullResetReason | 'unknown' | 'site-returned' | 'damaged';

export interface FullRepull {
  reason: FullRepullReason;
  startedAt: number;
  /** Null while under way. */
  finishedAt: number | null;
  /** Records received since it started. */
  received: number;
}

function isFullRepull(value: unknown): value is FullRepull {
  if (typeof value !== 'object' || value === null) return false;
  const v = value as Record<string, unknown>;
  return (
    typeof v.startedAt === 'number' &&
    typeof v.received === 'number' &&
    (v.finishedAt === null || typeof v.finishedAt === 'number') &&
    (v.reason === 'unknown' ||
      v.reason === 'site-returned' ||
      v.reason === 'damaged' ||
      (PULL_RESET_REASONS as readonly unknown[]).includes(v.reason))
  );
}

export function resetReasonOf(value: unknown): FullRepullReason {
  return (PULL_RESET_REASONS as readonly unknown[]).includes(value)
    ? (value as PullResetReason)
    : 'unknown';
}

export async function readFullRepull(db: FuselightDb): Promise<FullRepull | null> {
  const value = (await db.meta.get(FULL_REPULL_KEY))?.value;
  return isFullRepull(value) ? value : null;
}

/**
 * Moves the cursor back to 0 and records that a full re-pull is under way, in one transaction.
 * A re-pull already under way keeps its start and count.
 */
export async function beginFullRepull(
  db: FuselightDb,
  reason: FullRepullReason,
  nowMs: number,
): Promise<FullRepull> {
  return db.transaction('rw', db.meta, async () => {
    const current = await readFullRepull(db);
    const next: FullRepull =
      current && current.finishedAt === null
        ? current
        : { reason, startedAt: nowMs, finishedAt: null, received: 0 };
    await db.meta.bulkPut([
      { key: CURSOR_KEY, value: 0 },
      { key: FULL_REPULL_KEY, value: next },
    ]);
    return next;
  });
}

/** Adds a stored page's records to a re-pull under way; null when none is. */
export async function noteFullRepullPage(
  db: FuselightDb,
  records: number,
): Promise<FullRepull | null> {
  return db.transaction('rw', db.meta, async () => {
    const current = await readFullRepull(db);
    if (!current || current.finishedAt !== null) return current;
    const next = { ...current, received: current.received + records };
    await db.meta.put({ key: FULL_REPULL_KEY, value: next });
    return next;
  });
}

/** The last page came: the re-pull is done. */
export async function finishFullRepull(db: FuselightDb, nowMs: number): Promise<FullRepull | null> {
  return db.transaction('rw', db.meta, async () => {
    const current = await readFullRepull(db);
    if (!current || current.finishedAt !== null) return current;
    const next = { ...current, finishedAt: nowMs };
    await db.meta.put({ key: FULL_REPULL_KEY, value: next });
    return next;
  });
}

/** In words, for the sync indicator and the You screen; null when there is nothing to say. */
export function describeFullRepull(
  repull: FullRepull | null,
  formatTime: (ms: number) => string,
): string | null {
  if (!repull) return null;
  const why =
    repull.reason === 'cursor-epoch'
      ? 'the clinic server asked this tablet to fetch everything again to make sure nothing was missed'
      : repull.reason === 'horizon'
        ? 'this tablet was offline longer than the clinic server keeps deletions'
        : repull.reason === 'restored'
          ? 'the clinic server was restored from a backup'
          : repull.reason === 'site-returned'
            ? 'a site this tablet had stopped serving was given back to it'
            : repull.reason === 'damaged'
              ? 'a record stored on this tablet could not be read, so good copies are fetched from the clinic server'
              : 'the clinic server asked this tablet to start over';
  const count = `${formatCount(repull.received)} record${repull.received === 1 ? '' : 's'}`;
  if (repull.finishedAt === null) {
    return `Full re-sync under way (${why}): ${count} received so far. Your edits and Outbox are kept.`;
  }
  return `Full re-sync done at ${formatTime(repull.finishedAt)}: ${count} received.`;
}
