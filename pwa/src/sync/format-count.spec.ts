import { describe, expect, it } from 'vitest';
import { formatCount } from './format-count';

describe('formatCount', () => {
  it('groups digits as the platform’s own en-GB number format does', () => {
    // The reference: ECMA-402's Intl.NumberFormat for en-GB (maximumFractionDigits 0).
    const reference = new Intl.NumberFormat('en-GB', { maximumFractionDigits: 0 });
    for (const count of [
      0, 7, 999, 1_000, 12_345, 999_999, 1_000_000, 20_000, 1_234_567_890, -4_321,
    ]) {
      expect(formatCount(count)).toBe(reference.format(count));
    }
  });

  it('leaves a number that is not a whole count as the platform writes it', () => {
    expect(formatCount(2.5)).toBe('2.5');
    expect(formatCount(Number.NaN)).toBe('NaN');
  });
});
