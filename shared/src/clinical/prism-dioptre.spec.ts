import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ClinicalInputError } from './clinical-input.error';
import {
  convertDegreesToPrism,
  convertPrismToDegrees,
  degreesToPrismDioptres,
  prismDioptresToDegrees,
  ruleOfThumbDegrees,
  ruleOfThumbPrismDioptres,
} from './prism-dioptre';

describe('degrees to prism dioptres', () => {
  // Check values: Δ = 100·tan θ, Millodot, Dictionary of Optometry, "prism dioptre"
  // (tabled in docs/clinical-reference.md to three decimals).
  it.each([
    [1, 1.746], // Millodot
    [5, 8.749], // Millodot
    [10, 17.633], // Millodot
    [15, 26.795], // Millodot
    [20, 36.397], // Millodot
    [30, 57.735], // Millodot
    [45, 100], // Millodot
  ])('converts %s° to %sΔ by the exact definition', (deg, pd) => {
    expect(degreesToPrismDioptres(deg)).toBeCloseTo(pd, 3);
  });

  it('keeps the sign so a divergent angle stays divergent', () => {
    expect(degreesToPrismDioptres(-10)).toBeCloseTo(-17.633, 3); // Millodot, sign per convention
  });

  // Reverse check values, Millodot (docs/clinical-reference.md).
  it.each([
    [10, 5.711], // Millodot
    [20, 11.31], // Millodot
    [50, 26.565], // Millodot
  ])('converts %sΔ back to %s°', (pd, deg) => {
    expect(prismDioptresToDegrees(pd)).toBeCloseTo(deg, 3);
  });

  it('applies the clinic rule of thumb of 2Δ per degree', () => {
    // Common practice; Middle East Afr J Ophthalmol 2015;22(3):265 "about 2Δ per degree".
    expect(ruleOfThumbPrismDioptres(12)).toBe(24);
    expect(ruleOfThumbDegrees(24)).toBe(12);
  });

  it('refuses the rule of thumb at 45° and beyond where it is not stated', () => {
    expect(() => ruleOfThumbPrismDioptres(45)).toThrow(ClinicalInputError);
    expect(() => ruleOfThumbDegrees(-90)).toThrow(ClinicalInputError);
  });

  it.each([Number.NaN, Infinity, 90, -90, 120])('rejects %s° as an angle to convert', (deg) => {
    expect(() => degreesToPrismDioptres(deg)).toThrow(ClinicalInputError);
  });

  it('names the field that was wrong', () => {
    try {
      degreesToPrismDioptres(Number.NaN);
      expect.unreachable();
    } catch (error) {
      expect(error).toBeInstanceOf(ClinicalInputError);
      expect((error as ClinicalInputError).field).toBe('deg');
      expect((error as ClinicalInputError).message).toMatch(/finite/);
    }
  });

  it('rejects a prism value that is not finite', () => {
    expect(() => prismDioptresToDegrees(Infinity)).toThrow(ClinicalInputError);
  });

  it('labels which conversion produced a number', () => {
    const exact = convertDegreesToPrism(10);
    expect(exact.method).toBe('exact');
    expect(exact.value).toBeCloseTo(17.633, 3); // Millodot
    expect(exact.label).toBe('17.6Δ (exact, Δ = 100·tan θ)');
    const thumb = convertDegreesToPrism(10, 'rule of thumb');
    expect(thumb.label).toBe('20.0Δ (rule of thumb, 2Δ per degree)');
    expect(convertPrismToDegrees(20).label).toBe('11.3° (exact, Δ = 100·tan θ)'); // Millodot 11.310°
    expect(convertPrismToDegrees(20, 'rule of thumb').value).toBe(10);
  });

  describe('properties', () => {
    const angle = fc.double({ min: -89, max: 89, noNaN: true });

    it('returns to the starting angle after converting there and back', () => {
      fc.assert(
        fc.property(angle, (deg) => {
          expect(prismDioptresToDegrees(degreesToPrismDioptres(deg))).toBeCloseTo(deg, 9);
        }),
      );
    });

    it('grows with the angle', () => {
      fc.assert(
        fc.property(angle, angle, (a, b) => {
          fc.pre(a < b);
          // Strictly increasing once the angles differ by more than rounding can hide.
          if (b - a > 1e-9) {
            expect(degreesToPrismDioptres(a)).toBeLessThan(degreesToPrismDioptres(b));
          } else {
            expect(degreesToPrismDioptres(a)).toBeLessThanOrEqual(degreesToPrismDioptres(b));
          }
        }),
      );
    });

    it('never gives less than 100 times the angle in radians, since tan θ ≥ θ', () => {
      // 100·tan θ ≥ 100·θ(rad) = 1.745·θ(deg) for θ ≥ 0 — a property of tan, not a clinic value.
      fc.assert(
        fc.property(fc.double({ min: 0, max: 89, noNaN: true }), (deg) => {
          expect(degreesToPrismDioptres(deg)).toBeGreaterThanOrEqual(
            ((100 * Math.PI) / 180) * deg - 1e-9,
          );
        }),
      );
    });

    it('is odd: a divergent angle is the mirror of the convergent one', () => {
      fc.assert(
        fc.property(angle, (deg) => {
          expect(degreesToPrismDioptres(-deg)).toBeCloseTo(-degreesToPrismDioptres(deg), 9);
        }),
      );
    });
  });
});
