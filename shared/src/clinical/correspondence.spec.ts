import { describe, expect, it } from 'vitest';
import { CLINICAL_CAUTION } from './caution';
import { ClinicalInputError } from './clinical-input.error';
import { classifyCorrespondence } from './correspondence';

// Classes per docs/clinical-reference.md: angle of anomaly = objective − subjective (Millodot);
// NRC / harmonious / unharmonious ARC (Stedman's); default tolerance 5° (one teaching source).
describe('classifyCorrespondence', () => {
  it('calls matching angles NRC', () => {
    const r = classifyCorrespondence({ objectiveDeg: 12, subjectiveDeg: 10 });
    expect(r.result).toBe('NRC');
    expect(r.angleOfAnomalyDeg).toBe(2);
    expect(r.needsRemeasurement).toBe(false);
    expect(r.caution).toBe(CLINICAL_CAUTION);
  });

  it('treats a difference of exactly the tolerance as NRC and just over it as not', () => {
    expect(classifyCorrespondence({ objectiveDeg: 15, subjectiveDeg: 10 }).result).toBe('NRC');
    expect(classifyCorrespondence({ objectiveDeg: 15.5, subjectiveDeg: 10 }).result).toBe(
      'unharmonious ARC',
    );
  });

  it('calls a zero subjective angle with a large objective angle harmonious ARC', () => {
    const r = classifyCorrespondence({ objectiveDeg: 18, subjectiveDeg: 0 });
    expect(r.result).toBe('harmonious ARC');
    expect(r.angleOfAnomalyDeg).toBe(18); // equals the objective angle (Stedman's)
  });

  it('calls a subjective angle between zero and the objective unharmonious ARC', () => {
    const r = classifyCorrespondence({ objectiveDeg: -20, subjectiveDeg: -10 });
    expect(r.result).toBe('unharmonious ARC');
    expect(r.angleOfAnomalyDeg).toBe(-10);
  });

  it('asks for re-measurement when the subjective angle is beyond the objective', () => {
    const r = classifyCorrespondence({ objectiveDeg: 10, subjectiveDeg: 25 });
    expect(r.result).toBe('inconsistent');
    expect(r.needsRemeasurement).toBe(true);
    expect(r.message).toMatch(/beyond the objective/);
    expect(r.message).toMatch(/Re-measure/);
  });

  it('asks for re-measurement when the angles have opposite signs', () => {
    const r = classifyCorrespondence({ objectiveDeg: 15, subjectiveDeg: -12 });
    expect(r.result).toBe('inconsistent');
    expect(r.message).toMatch(/opposite side/);
  });

  it('uses the clinic tolerance when one is set', () => {
    expect(
      classifyCorrespondence({ objectiveDeg: 12, subjectiveDeg: 9, toleranceDeg: 2 }).result,
    ).toBe('unharmonious ARC');
    expect(
      classifyCorrespondence({ objectiveDeg: 12, subjectiveDeg: 9, toleranceDeg: 3 }).result,
    ).toBe('NRC');
  });

  it('rejects a negative tolerance and a non-finite angle', () => {
    expect(() =>
      classifyCorrespondence({ objectiveDeg: 1, subjectiveDeg: 1, toleranceDeg: -1 }),
    ).toThrow(ClinicalInputError);
    expect(() => classifyCorrespondence({ objectiveDeg: Number.NaN, subjectiveDeg: 1 })).toThrow(
      /objectiveDeg/,
    );
  });
});
