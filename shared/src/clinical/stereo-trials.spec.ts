import binomialCdf from '@stdlib/stats-base-dists-binomial-cdf';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ClinicalInputError } from './clinical-input.error';
import {
  stereoChanceTail,
  stereoChanceTailFraction,
  stereoTrialSequence,
  stereoVerdict,
  type StereoTrial,
} from './stereo-trials';

/** Independent reference: P(X ≥ k) = 1 − cdf(k − 1, n, ½) from @stdlib. */
function stdlibTail(k: number, n: number): number {
  return k <= 0 ? 1 : 1 - binomialCdf(k - 1, n, 0.5);
}

/** A seeded linear congruential generator, so an "unpredictable" sequence can be replayed. */
function seeded(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return state / 2 ** 32;
  };
}

function trials(correct: number, wrong: number): StereoTrial[] {
  return [
    ...Array.from({ length: correct }, (): StereoTrial => ({
      presented: 'toward',
      answer: 'toward',
    })),
    ...Array.from({ length: wrong }, (): StereoTrial => ({ presented: 'away', answer: 'toward' })),
  ];
}

describe('stereoChanceTail', () => {
  // Exact values from docs/clinical-reference.md ("Forced-choice stereo trials", exact arithmetic).
  it.each([
    [5, 5, 0.03125],
    [6, 6, 0.015625],
    [7, 8, 0.03515625],
    [8, 10, 0.0546875],
    [9, 10, 0.0107421875],
  ])('gives P(X ≥ %s | n = %s) = %s exactly', (k, n, expected) => {
    expect(stereoChanceTail(k, n)).toBe(expected);
  });

  it('gives the exact fraction behind a tail', () => {
    // 9 or 10 right of 10: C(10,9) + C(10,10) = 11 ways in 1024 (binomial coefficients).
    expect(stereoChanceTailFraction(9, 10)).toEqual({ numerator: 11n, denominator: 1024n });
  });

  it('agrees with @stdlib for every k up to n = 60', () => {
    for (let n = 0; n <= 60; n += 1) {
      for (let k = 0; k <= n; k += 1) {
        expect(stereoChanceTail(k, n)).toBeCloseTo(stdlibTail(k, n), 12);
      }
    }
  });

  it('is 1 for zero right answers, the certain event', () => {
    expect(stereoChanceTail(0, 7)).toBe(1);
  });

  it('falls as the count of right answers rises (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 200 }), fc.nat(), (n, seed) => {
        const k = seed % n;
        // Strict on the exact counts (same denominator 2ⁿ); the doubles may round to equal.
        expect(stereoChanceTailFraction(k + 1, n).numerator).toBeLessThan(
          stereoChanceTailFraction(k, n).numerator,
        );
        expect(stereoChanceTail(k + 1, n)).toBeLessThanOrEqual(stereoChanceTail(k, n));
      }),
    );
  });

  it('agrees with @stdlib on random trial counts (property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 300 }), fc.nat(), (n, seed) => {
        const k = seed % (n + 1);
        expect(Math.abs(stereoChanceTail(k, n) - stdlibTail(k, n))).toBeLessThan(1e-10);
      }),
    );
  });

  it('rejects more right answers than trials', () => {
    expect(() => stereoChanceTail(6, 5)).toThrow(ClinicalInputError);
    expect(() => stereoChanceTail(6, 5)).toThrow(/correct/);
  });

  it('rejects fractional and negative counts', () => {
    expect(() => stereoChanceTail(2.5, 5)).toThrow(ClinicalInputError);
    expect(() => stereoChanceTail(-1, 5)).toThrow(ClinicalInputError);
    expect(() => stereoChanceTail(1, Number.NaN)).toThrow(/total/);
  });
});

describe('stereoTrialSequence', () => {
  it('draws one presentation per trial from the injected source', () => {
    const draws = [0.1, 0.9, 0.49, 0.5, 0.0];
    let i = 0;
    expect(stereoTrialSequence(5, () => draws[i++] ?? 0)).toEqual([
      'toward',
      'away',
      'toward',
      'away',
      'toward',
    ]);
  });

  it('replays the same order from the same seed and differs between seeds', () => {
    expect(stereoTrialSequence(20, seeded(7))).toEqual(stereoTrialSequence(20, seeded(7)));
    expect(stereoTrialSequence(20, seeded(7))).not.toEqual(stereoTrialSequence(20, seeded(8)));
  });

  it('shows both presentations about equally often over many trials', () => {
    const sequence = stereoTrialSequence(1000, seeded(42));
    const toward = sequence.filter((p) => p === 'toward').length;
    // 1000 fair draws: 500 ± 3·√250 ≈ ±47 covers all but about 0.3% of seeds.
    expect(Math.abs(toward - 500)).toBeLessThan(60);
  });

  it('rejects a random source that strays outside [0, 1)', () => {
    expect(() => stereoTrialSequence(3, () => 1)).toThrow(/random/);
    expect(() => stereoTrialSequence(3, () => Number.NaN)).toThrow(ClinicalInputError);
  });

  it('rejects a trial count that is not a whole number', () => {
    expect(() => stereoTrialSequence(2.5, Math.random)).toThrow(/n:/);
  });
});

describe('stereoVerdict', () => {
  it('reports stereopsis present for five right of five', () => {
    const v = stereoVerdict(trials(5, 0));
    expect(v).toMatchObject({ correct: 5, total: 5, verdict: 'present', moreCorrectNeeded: 0 });
    expect(v.chanceTail).toBe(0.03125); // docs/clinical-reference.md, P(X ≥ 5 | 5)
  });

  it('does not report stereopsis for eight right of ten and says one more settles it', () => {
    const v = stereoVerdict(trials(8, 2));
    expect(v.chanceTail).toBe(0.0546875); // docs/clinical-reference.md, P(X ≥ 8 | 10)
    expect(v.verdict).toBe('not shown');
    // P(X ≥ 9 | 11) = (C(11,9)+C(11,10)+C(11,11)) / 2048 = 67/2048 ≈ 0.0327 < 0.05.
    expect(stereoChanceTail(9, 11)).toBe(67 / 2048);
    expect(v.moreCorrectNeeded).toBe(1);
    expect(v.message).toMatch(/1 more right answer in a row/);
  });

  it('finds the fewest further right answers, checked against @stdlib', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 30 }), fc.integer({ min: 0, max: 10 }), (c, w) => {
        const { moreCorrectNeeded: m } = stereoVerdict(trials(c, w));
        expect(stdlibTail(c + m, c + w + m)).toBeLessThan(0.05 + 1e-12);
        if (m > 0)
          expect(stdlibTail(c + m - 1, c + w + m - 1)).toBeGreaterThanOrEqual(0.05 - 1e-12);
      }),
    );
  });

  it('needs five straight right answers from a standing start', () => {
    // P(X ≥ 4 | 4) = 1/16 = 0.0625 ≥ 0.05; P(X ≥ 5 | 5) = 0.03125 (docs/clinical-reference.md).
    expect(stereoVerdict([]).moreCorrectNeeded).toBe(5);
  });

  it('uses a stricter clinic threshold when one is set', () => {
    const v = stereoVerdict(trials(5, 0), { alpha: 0.01 });
    expect(v.verdict).toBe('not shown');
    // P(X ≥ 7 | 7) = 1/128 ≈ 0.0078 < 0.01, P(X ≥ 6 | 6) = 0.015625 (docs/clinical-reference.md).
    expect(v.moreCorrectNeeded).toBe(2);
  });

  it('rejects a threshold outside (0, 1) and a malformed trial', () => {
    expect(() => stereoVerdict(trials(3, 0), { alpha: 0 })).toThrow(/alpha/);
    expect(() => stereoVerdict([{ presented: 'toward', answer: 'sideways' as never }])).toThrow(
      /trials\[0\]\.answer/,
    );
  });
});
