import { describe, expect, it } from 'vitest';
import {
  DEFAULT_UNSYNCED_WARNING_HOURS,
  describeWait,
  describeWarningHours,
  unsyncedTooLong,
  waitedMs,
} from './unsynced-age';

const HOUR = 3_600_000;
const now = Date.parse('2026-12-04T09:00:00.000Z');

describe('the age rule for unsynced edits', () => {
  it('warns only once the oldest edit is older than the setting, not at it', () => {
    expect(unsyncedTooLong(now - 24 * HOUR, now, 24)).toBe(false);
    expect(unsyncedTooLong(now - 24 * HOUR - 1, now, 24)).toBe(true);
    expect(unsyncedTooLong(now - 7 * HOUR, now, 6)).toBe(true);
    expect(unsyncedTooLong(now - 5 * HOUR, now, 6)).toBe(false);
  });

  it('never warns for an empty Outbox', () => {
    expect(unsyncedTooLong(null, now, 1)).toBe(false);
  });

  it('falls back to 24 hours when the setting is not a positive number', () => {
    expect(DEFAULT_UNSYNCED_WARNING_HOURS).toBe(24);
    for (const setting of [0, -3, Number.NaN, Number.POSITIVE_INFINITY]) {
      expect(unsyncedTooLong(now - 23 * HOUR, now, setting)).toBe(false);
      expect(unsyncedTooLong(now - 25 * HOUR, now, setting)).toBe(true);
    }
  });

  it('counts an edit stamped ahead of the tablet’s clock as just made, not as negative age', () => {
    expect(waitedMs(now + 5 * HOUR, now)).toBe(0);
    expect(unsyncedTooLong(now + 5 * HOUR, now, 1)).toBe(false);
  });

  it('says how long an entry has waited in words', () => {
    expect(describeWait(30_000)).toBe('less than a minute');
    expect(describeWait(60_000)).toBe('1 minute');
    expect(describeWait(12 * 60_000)).toBe('12 minutes');
    expect(describeWait(HOUR)).toBe('1 hour');
    expect(describeWait(3 * HOUR + 20 * 60_000)).toBe('3 hours 20 minutes');
    expect(describeWait(24 * HOUR)).toBe('1 day');
    expect(describeWait(52 * HOUR + 59 * 60_000)).toBe('2 days 4 hours');
  });

  it('names the setting in hours up to two days, in days beyond', () => {
    expect(describeWarningHours(24)).toBe('24 hours');
    expect(describeWarningHours(1)).toBe('1 hour');
    expect(describeWarningHours(48)).toBe('48 hours');
    expect(describeWarningHours(72)).toBe('3 days');
    expect(describeWarningHours(30)).toBe('30 hours');
  });
});
