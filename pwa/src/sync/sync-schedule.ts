// When the engine syncs: once at start, as soon as the network returns, `intervalMs` after a sync
// that went through (or was blocked), and after a failure with exponential back-off and jitter
// (backoff.ts). Nothing is tried while offline. "Sync now" during a sync joins it, and the sync
// runs once more after it, so an edit made meanwhile is sent.
import { DEFAULT_BACKOFF, backoffDelay, type BackoffPolicy } from './backoff';
import type { SyncStatusStore } from './sync-status';
import type { SyncClock, SyncTimers } from './sync-transport';

/** Whether the tablet has a network, and news when that changes. */
export interface NetworkMonitor {
  isOnline(): boolean;
  subscribe(listener: (online: boolean) => void): () => void;
}

export function browserNetwork(): NetworkMonitor {
  return {
    isOnline: () => (typeof navigator === 'undefined' ? true : navigator.onLine !== false),
    subscribe(listener) {
      if (typeof window === 'undefined') return () => undefined;
      const online = () => listener(true);
      const offline = () => listener(false);
      window.addEventListener('online', online);
      window.addEventListener('offline', offline);
      return () => {
        window.removeEventListener('online', online);
        window.removeEventListener('offline', offline);
      };
    },
  };
}

export interface SyncScheduleOptions<T> {
  /** One sync; it tells the schedule what comes next (succeeded, blocked, failed). */
  run: () => Promise<T>;
  status: SyncStatusStore;
  clock: SyncClock;
  timers: SyncTimers;
  network: NetworkMonitor;
  random: () => number;
  intervalMs: number;
  backoff?: BackoffPolicy;
}

export class SyncSchedule<T> {
  private running: Promise<T> | null = null;
  private again = false;
  private timer: unknown = null;
  private started = false;
  private unsubscribers: Array<() => void> = [];
  private failures = 0;
  private readonly backoff: BackoffPolicy;

  constructor(private readonly options: SyncScheduleOptions<T>) {
    this.backoff = options.backoff ?? DEFAULT_BACKOFF;
  }

  /**
   * Starts: a sync now, on reconnect, and on the timer. `alsoUntilStop` are undone by stop();
   * `beforeFirst` runs just before the first sync is asked for.
   */
  start(alsoUntilStop: Array<() => void> = [], beforeFirst?: () => void): void {
    if (this.started) return;
    this.started = true;
    this.unsubscribers.push(
      this.options.network.subscribe((online) => {
        this.options.status.update({ online });
        if (online) this.request();
        else this.clearTimer();
      }),
      ...alsoUntilStop,
    );
    beforeFirst?.();
    this.request();
  }

  stop(): void {
    this.started = false;
    this.clearTimer();
    for (const unsubscribe of this.unsubscribers.splice(0)) unsubscribe();
  }

  /** Runs a sync (or joins the one running and runs once more after it). */
  syncNow(): Promise<T> {
    if (this.running) {
      this.again = true;
      return this.running;
    }
    const run = (async () => {
      let outcome = await this.options.run();
      while (this.again) {
        this.again = false;
        outcome = await this.options.run();
      }
      return outcome;
    })().finally(() => {
      this.running = null;
    });
    this.running = run;
    return run;
  }

  /** For the background schedule: failures are already in the status. */
  request(): void {
    this.syncNow().catch(() => undefined);
  }

  /** The sync went through: the failure count starts again, the next one after the interval. */
  succeeded(): void {
    this.failures = 0;
    this.after(this.options.intervalMs);
  }

  /** The sync is blocked until an update: looked at again after the interval. */
  blocked(): void {
    this.after(this.options.intervalMs);
  }

  /** Counts a failure and returns how many in a row; call retry() once the status says so. */
  failed(): number {
    this.failures += 1;
    return this.failures;
  }

  /** Retries after the back-off of the failures so far. */
  retry(): void {
    this.after(backoffDelay(this.failures, this.options.random, this.backoff));
  }

  private clearTimer(): void {
    if (this.timer !== null) this.options.timers.clearTimeout(this.timer);
    this.timer = null;
    this.options.status.update({ nextAttemptAt: null });
  }

  private after(delayMs: number): void {
    this.clearTimer();
    if (!this.started) return;
    this.timer = this.options.timers.setTimeout(() => {
      this.timer = null;
      this.request();
    }, delayMs);
    this.options.status.update({ nextAttemptAt: this.options.clock.now() + delayMs });
  }
}
