import { describe, expect, it } from 'vitest';
import { accommodationAmplitude } from './accommodation';
import { ClinicalInputError } from './clinical-input.error';

describe('accommodationAmplitude', () => {
  // Hofstetter (1950) worked values, docs/clinical-reference.md.
  it.each([
    [10, 12.5, 15.5, 21.0], // Hofstetter
    [20, 10, 12.5, 17], // Hofstetter
    [40, 5, 6.5, 9], // Hofstetter
  ])('gives min/mean/max at age %s as %s / %s / %s D', (age, min, mean, max) => {
    const a = accommodationAmplitude(age);
    expect(a.min).toBeCloseTo(min, 10);
    expect(a.mean).toBeCloseTo(mean, 10);
    expect(a.max).toBeCloseTo(max, 10);
    expect(a.heldAtZero).toBe(false);
  });

  it('holds the amplitude at zero where the lines cross it', () => {
    const a = accommodationAmplitude(70);
    expect(a).toMatchObject({ min: 0, mean: 0, max: 0, heldAtZero: true });
  });

  it('rejects a negative age and a non-finite one', () => {
    expect(() => accommodationAmplitude(-1)).toThrow(ClinicalInputError);
    expect(() => accommodationAmplitude(Number.NaN)).toThrow(/ageYears/);
  });
});
