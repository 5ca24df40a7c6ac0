import { describe, expect, it } from 'vitest';
import { ClinicalInputError } from './clinical-input.error';
import { describeDeviation } from './deviation';

// Sign conventions from docs/clinical-reference.md; Δ values by Millodot's definition,
// Δ = 100·tan θ.
describe('describeDeviation', () => {
  it('calls a convergent angle eso and gives both units', () => {
    const d = describeDeviation({ horizontalDeg: 10, eye: 'left' });
    expect(d.horizontal?.term).toBe('eso');
    expect(d.horizontal?.prismDioptres).toBeCloseTo(17.633, 3); // Millodot, 10° = 17.633Δ
    expect(d.summary).toBe('Left eye: eso 10.0° (17.6Δ)');
  });

  it('calls a divergent angle exo with unsigned magnitudes', () => {
    const d = describeDeviation({ horizontalDeg: -20 });
    expect(d.horizontal?.term).toBe('exo');
    expect(d.horizontal?.degrees).toBe(20);
    expect(d.horizontal?.prismDioptres).toBeCloseTo(36.397, 3); // Millodot, 20° = 36.397Δ
  });

  it('writes R/L when the right eye is higher and L/R when the left is', () => {
    const up = describeDeviation({ verticalPd: 10 });
    expect(up.vertical?.term).toBe('R/L');
    expect(up.vertical?.degrees).toBeCloseTo(5.711, 3); // Millodot, 10Δ = 5.711°
    expect(describeDeviation({ verticalPd: -4 }).vertical?.text).toBe('L/R 4.0Δ (2.3°)');
  });

  it('writes excyclo for positive and incyclo for negative torsion', () => {
    expect(describeDeviation({ torsionDeg: 3 }).torsion?.text).toBe('excyclo 3.0°');
    expect(describeDeviation({ torsionDeg: -2 }).torsion?.term).toBe('incyclo');
  });

  it('joins the parts in one summary', () => {
    const d = describeDeviation({ horizontalDeg: -5, verticalPd: 3, torsionDeg: -1, eye: 'right' });
    expect(d.summary).toBe('Right eye: exo 5.0° (8.7Δ); R/L 3.0Δ (1.7°); incyclo 1.0°'); // 5° = 8.749Δ, Millodot
  });

  it('says when a component is zero and when nothing was recorded', () => {
    expect(describeDeviation({ horizontalDeg: 0 }).summary).toBe('no horizontal deviation');
    expect(describeDeviation({}).summary).toBe('no deviation recorded');
  });

  it('rejects an angle at 90° or beyond and a non-finite vertical', () => {
    expect(() => describeDeviation({ horizontalDeg: 95 })).toThrow(ClinicalInputError);
    expect(() => describeDeviation({ verticalPd: Number.NaN })).toThrow(/verticalPd/);
  });
});
