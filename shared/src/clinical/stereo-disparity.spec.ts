import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ClinicalInputError } from './clinical-input.error';
import { stereoDisparityArcsec, stereoDisparityExactArcsec } from './stereo-disparity';

describe('stereoDisparityArcsec', () => {
  it('gives about 84″ for a 1 mm step at 40 cm with a 6.5 cm interocular distance', () => {
    // Worked example, docs/clinical-reference.md ("Stereoacuity"):
    // a = 6.5 cm, z = 40 cm, Δz = 1 mm.
    const d = stereoDisparityArcsec({ interocularMm: 65, viewingDistanceMm: 400, depthMm: 1 });
    expect(Math.round(d)).toBe(84);
  });

  it('agrees with the exact vergence difference for small depth steps (property)', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 50, max: 75, noNaN: true }),
        fc.double({ min: 250, max: 6000, noNaN: true }),
        fc.double({ min: 0.01, max: 2, noNaN: true }),
        (a, z, dz) => {
          const input = { interocularMm: a, viewingDistanceMm: z, depthMm: dz };
          const approx = stereoDisparityArcsec(input);
          const exact = stereoDisparityExactArcsec(input);
          // The small-angle form drops terms of order Δz/z and (a/2z)², so its relative error is
          // bounded by those (expansion of atan about zero).
          expect(Math.abs(approx - exact) / exact).toBeLessThan(
            (2 * dz) / z + (a * a) / (2 * z * z),
          );
        },
      ),
    );
  });

  it('rejects a depth step as deep as the viewing distance and non-positive lengths', () => {
    expect(() =>
      stereoDisparityArcsec({ interocularMm: 65, viewingDistanceMm: 400, depthMm: 400 }),
    ).toThrow(/depthMm/);
    expect(() =>
      stereoDisparityArcsec({ interocularMm: 0, viewingDistanceMm: 400, depthMm: 1 }),
    ).toThrow(ClinicalInputError);
  });
});
