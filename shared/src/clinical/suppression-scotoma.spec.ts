import { describe, expect, it } from 'vitest';
import { ClinicalInputError } from './clinical-input.error';
import { suppressionScotomaRegion } from './suppression-scotoma';

// Method per docs/clinical-reference.md ("Suppression scotoma"); geometry is plain subtraction from
// the objective angle, so these are worked examples, not published check values.
describe('suppressionScotomaRegion', () => {
  it('centres the region on the fovea at the objective angle', () => {
    const r = suppressionScotomaRegion({
      eye: 'left',
      objectiveHorizontalDeg: 12,
      horizontalLostDeg: [16, 7],
      verticalLostDeg: [-3, 5],
    });
    expect(r).toMatchObject({
      xMinDeg: -5,
      xMaxDeg: 4,
      yMinDeg: -3,
      yMaxDeg: 5,
      widthDeg: 9,
      heightDeg: 8,
    });
    expect(r.coversFovea).toBe(true);
  });

  it('gives SVG shapes with y pointing down', () => {
    const r = suppressionScotomaRegion({
      eye: 'right',
      objectiveHorizontalDeg: 0,
      horizontalLostDeg: [-2, 6],
      verticalLostDeg: [1, 5],
    });
    expect(r.svg.rect).toEqual({ x: -2, y: -5, width: 8, height: 4 });
    expect(r.svg.ellipse).toEqual({ cx: 2, cy: -3, rx: 4, ry: 2 });
    expect(r.coversFovea).toBe(false); // the region sits wholly above the fovea
  });

  it('reports a region beside the fovea as not covering it', () => {
    const r = suppressionScotomaRegion({
      eye: 'right',
      objectiveHorizontalDeg: -10,
      horizontalLostDeg: [-6, -2],
    });
    expect(r.coversFovea).toBe(false);
  });

  it('leaves fovea cover unknown when only the horizontal span was mapped', () => {
    const r = suppressionScotomaRegion({
      eye: 'right',
      objectiveHorizontalDeg: 5,
      horizontalLostDeg: [2, 9],
    });
    expect(r.verticalRecorded).toBe(false);
    expect(r.coversFovea).toBeNull();
    expect(r.svg.ellipse).toBeNull();
    expect(r.svg.span).toEqual({ x1: -3, x2: 4, y: 0 });
  });

  it('rejects equal positions, a missing side and a non-finite angle', () => {
    const base = { eye: 'right' as const, objectiveHorizontalDeg: 0 };
    expect(() => suppressionScotomaRegion({ ...base, horizontalLostDeg: [3, 3] })).toThrow(
      /horizontalLostDeg/,
    );
    expect(() =>
      suppressionScotomaRegion({ ...base, horizontalLostDeg: [3] as unknown as [number, number] }),
    ).toThrow(ClinicalInputError);
    expect(() =>
      suppressionScotomaRegion({
        ...base,
        horizontalLostDeg: [1, 2],
        verticalLostDeg: [0, Number.NaN],
      }),
    ).toThrow(/verticalLostDeg\[1\]/);
  });
});
