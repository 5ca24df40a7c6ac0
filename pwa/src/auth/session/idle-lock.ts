// When a protected tablet locks by itself: after `idleMinutes` without a touch, a click or a key,
// and when it comes back after being hidden (screen off, another app) for that long. Pure timing:
// the caller feeds it activity and the page's visibility, and locks when told.
export class IdleTimer {
  private lastActivity: number;
  private hiddenAt: number | null = null;

  constructor(
    private readonly now: () => number,
    private idleMs: number,
  ) {
    this.lastActivity = now();
  }

  setIdleMinutes(minutes: number): void {
    this.idleMs = minutes * 60_000;
  }

  /** A touch, a click or a key. */
  activity(): void {
    this.lastActivity = this.now();
  }

  hidden(): void {
    this.hiddenAt = this.now();
  }

  /** Back on screen: true when it was hidden for the idle time or longer (lock now). */
  shown(): boolean {
    const hiddenFor = this.hiddenAt === null ? 0 : this.now() - this.hiddenAt;
    this.hiddenAt = null;
    if (hiddenFor >= this.idleMs) return true;
    return this.due();
  }

  /** True when nothing happened for the idle time. */
  due(): boolean {
    return this.now() - this.lastActivity >= this.idleMs;
  }
}
