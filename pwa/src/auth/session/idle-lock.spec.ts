import { describe, expect, it } from 'vitest';
import { IdleTimer } from './idle-lock';

describe('the idle lock timing', () => {
  it('is due after the idle minutes without activity, and activity starts the count again', () => {
    const clock = { now: 0 };
    const timer = new IdleTimer(() => clock.now, 5 * 60_000);
    clock.now = 4 * 60_000;
    expect(timer.due()).toBe(false);
    timer.activity();
    clock.now = 8 * 60_000;
    expect(timer.due()).toBe(false);
    clock.now = 9 * 60_000;
    expect(timer.due()).toBe(true);
  });

  it('locks on return after being hidden for the idle time, not after a short glance away', () => {
    const clock = { now: 0 };
    const timer = new IdleTimer(() => clock.now, 5 * 60_000);
    timer.hidden();
    clock.now = 60_000;
    expect(timer.shown()).toBe(false);
    timer.activity();
    timer.hidden();
    clock.now += 5 * 60_000;
    expect(timer.shown()).toBe(true);
  });
});
