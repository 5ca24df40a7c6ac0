import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  MAX_CLOCK_AHEAD_MS,
  MAX_STAMP_COUNTER,
  compareStamps,
  createClock,
  formatStamp,
  isStampTooFarAhead,
  parseStamp,
  receive,
  tick,
  tryParseStamp,
  type HlcClock,
} from './hlc';

const T0 = Date.UTC(2026, 11, 1, 9, 0, 0);
const DEVICE = '0190c6a0-0000-7000-8000-000000000001';

const deviceIdArb = fc.stringMatching(/^[0-9a-z-]{1,40}$/);
const wallArb = fc.integer({ min: 0, max: 4_000_000_000_000 });
const partsArb = fc.record({
  wallMs: wallArb,
  counter: fc.integer({ min: 0, max: MAX_STAMP_COUNTER }),
  deviceId: deviceIdArb,
});

function tuple(a: { wallMs: number; counter: number; deviceId: string }, b: typeof a): number {
  if (a.wallMs !== b.wallMs) return a.wallMs < b.wallMs ? -1 : 1;
  if (a.counter !== b.counter) return a.counter < b.counter ? -1 : 1;
  return a.deviceId < b.deviceId ? -1 : a.deviceId > b.deviceId ? 1 : 0;
}

describe('HLC stamps', () => {
  it('formats a stamp as 15-digit wall ms, 5-digit counter and the device id', () => {
    expect(formatStamp({ wallMs: 1_733_011_200_000, counter: 7, deviceId: DEVICE })).toBe(
      `001733011200000-00007-${DEVICE}`,
    );
  });

  it('parses the stamp it formats, including a device id that contains dashes', () => {
    const stamp = `001733011200000-00042-${DEVICE}`;
    expect(parseStamp(stamp)).toEqual({ wallMs: 1_733_011_200_000, counter: 42, deviceId: DEVICE });
  });

  it.each([
    ['a short wall part', `1733011200000-00000-${DEVICE}`],
    ['a short counter', `001733011200000-0000-${DEVICE}`],
    ['no device id', '001733011200000-00000-'],
    ['letters in the wall part', `00173301120000x-00000-${DEVICE}`],
    ['an empty string', ''],
  ])('refuses %s', (_what, stamp) => {
    expect(tryParseStamp(stamp)).toBeNull();
    expect(() => parseStamp(stamp)).toThrow(/not an HLC stamp/);
  });

  it('refuses to format a counter past five digits', () => {
    expect(() => formatStamp({ wallMs: 1, counter: 100_000, deviceId: DEVICE })).toThrow(/counter/);
  });

  it('orders stamps as strings the same way as (wall, counter, device id) numerically', () => {
    fc.assert(
      fc.property(partsArb, partsArb, (a, b) => {
        expect(Math.sign(compareStamps(formatStamp(a), formatStamp(b)))).toBe(tuple(a, b));
      }),
    );
  });

  it('round-trips every stamp through format and parse', () => {
    fc.assert(
      fc.property(partsArb, (parts) => {
        expect(parseStamp(formatStamp(parts))).toEqual(parts);
      }),
    );
  });
});

describe('HLC clock', () => {
  it('takes the wall time when it is ahead of the clock, with counter 0', () => {
    const { stamp } = tick(createClock(DEVICE), T0);
    expect(parseStamp(stamp)).toEqual({ wallMs: T0, counter: 0, deviceId: DEVICE });
  });

  it('counts up within one millisecond and when the wall clock goes backwards', () => {
    const first = tick(createClock(DEVICE), T0);
    const second = tick(first.clock, T0);
    const third = tick(second.clock, T0 - 5_000);
    expect(parseStamp(second.stamp).counter).toBe(1);
    expect(parseStamp(third.stamp)).toMatchObject({ wallMs: T0, counter: 2 });
  });

  it('moves the wall part one millisecond ahead when the counter would overflow', () => {
    const full: HlcClock = { deviceId: DEVICE, wallMs: T0, counter: MAX_STAMP_COUNTER };
    const { clock, stamp } = tick(full, T0);
    expect(clock).toEqual({ deviceId: DEVICE, wallMs: T0 + 1, counter: 0 });
    expect(compareStamps(stamp, formatStamp(full))).toBeGreaterThan(0);
  });

  it('moves past a received stamp whose counter is full', () => {
    const remote = formatStamp({ wallMs: T0, counter: MAX_STAMP_COUNTER, deviceId: 'other' });
    const clock = receive(createClock(DEVICE), remote, T0 - 10);
    expect(compareStamps(tick(clock, T0 - 10).stamp, remote)).toBeGreaterThan(0);
  });

  it('advances past a stamp from a device whose clock is ahead', () => {
    const remote = formatStamp({ wallMs: T0 + 60_000, counter: 3, deviceId: 'other' });
    const clock = receive(createClock(DEVICE), remote, T0);
    expect(clock).toEqual({ deviceId: DEVICE, wallMs: T0 + 60_000, counter: 4 });
  });

  it('issues strictly increasing stamps whatever the wall clock does (monotonicity)', () => {
    fc.assert(
      fc.property(fc.array(wallArb, { minLength: 1, maxLength: 60 }), (times) => {
        let clock = createClock(DEVICE);
        let previous = '';
        for (const now of times) {
          const next = tick(clock, now);
          expect(compareStamps(next.stamp, previous)).toBeGreaterThan(0);
          clock = next.clock;
          previous = next.stamp;
        }
      }),
    );
  });

  it('ticks past every stamp it received and past its own last stamp (causality)', () => {
    const eventArb = fc.oneof(
      fc.record({ kind: fc.constant('tick' as const), now: wallArb }),
      fc.record({ kind: fc.constant('receive' as const), now: wallArb, remote: partsArb }),
    );
    fc.assert(
      fc.property(fc.array(eventArb, { minLength: 1, maxLength: 40 }), (events) => {
        let clock = createClock(DEVICE);
        let greatestSeen = '';
        for (const event of events) {
          if (event.kind === 'receive') {
            const remote = formatStamp(event.remote);
            clock = receive(clock, remote, event.now);
            if (compareStamps(remote, greatestSeen) > 0) greatestSeen = remote;
            const after = tick(clock, event.now);
            expect(compareStamps(after.stamp, remote)).toBeGreaterThan(0);
          } else {
            const next = tick(clock, event.now);
            expect(compareStamps(next.stamp, greatestSeen)).toBeGreaterThan(0);
            greatestSeen = next.stamp;
            clock = next.clock;
          }
        }
      }),
    );
  });

  it('stays within the counter and close to the greatest physical time it has seen', () => {
    fc.assert(
      fc.property(fc.array(wallArb, { minLength: 1, maxLength: 30 }), (times) => {
        let clock = createClock(DEVICE);
        for (const now of times) clock = tick(clock, now).clock;
        // Bounded drift (HLC paper, theorem 2): the wall part is the greatest time seen.
        expect(clock.wallMs).toBe(Math.max(...times));
        expect(clock.counter).toBeLessThanOrEqual(MAX_STAMP_COUNTER);
      }),
    );
  });
});

describe('broken clocks', () => {
  it('accepts a stamp exactly a day ahead of server time', () => {
    const stamp = formatStamp({ wallMs: T0 + MAX_CLOCK_AHEAD_MS, counter: 0, deviceId: DEVICE });
    expect(isStampTooFarAhead(stamp, T0)).toBe(false);
  });

  it('rejects a stamp from a clock a day and a millisecond ahead', () => {
    const stamp = formatStamp({
      wallMs: T0 + MAX_CLOCK_AHEAD_MS + 1,
      counter: 0,
      deviceId: DEVICE,
    });
    expect(isStampTooFarAhead(stamp, T0)).toBe(true);
  });

  it('accepts a stamp from a clock far behind', () => {
    expect(isStampTooFarAhead(formatStamp({ wallMs: 0, counter: 0, deviceId: DEVICE }), T0)).toBe(
      false,
    );
  });
});
