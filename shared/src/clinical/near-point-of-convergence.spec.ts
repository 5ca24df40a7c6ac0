import { describe, expect, it } from 'vitest';
import { ClinicalInputError } from './clinical-input.error';
import { judgeNearPointOfConvergence } from './near-point-of-convergence';

describe('judgeNearPointOfConvergence', () => {
  // Adult cut-offs: break beyond 5 cm or recovery beyond 7 cm is abnormal (Scheiman et al. 2003).
  it('accepts an adult break at 5 cm and recovery at 7 cm', () => {
    const j = judgeNearPointOfConvergence({ breakCm: 5, recoveryCm: 7, ageYears: 30 });
    expect(j.verdict).toBe('within norm');
    expect(j.citation).toMatch(/Scheiman/);
  });

  it('calls an adult break beyond 5 cm receded', () => {
    const j = judgeNearPointOfConvergence({ breakCm: 6, recoveryCm: 7, ageYears: 30 });
    expect(j.verdict).toBe('receded');
    expect(j.reasons).toEqual(['break 6.0 cm is beyond 5 cm']);
  });

  it('calls an adult recovery beyond 7 cm receded even with a good break', () => {
    const j = judgeNearPointOfConvergence({ breakCm: 4, recoveryCm: 8, ageYears: 45 });
    expect(j.verdict).toBe('receded');
    expect(j.reasons[0]).toMatch(/recovery 8.0 cm/);
  });

  it('judges a kindergarten-age child against 3.3 ± 2.6 cm', () => {
    // Optom Vis Sci 1998 (elementary schoolchildren): kindergarten 3.3 ± 2.6 cm; the limit
    // mean + 1 SD = 5.9 cm is Fuselight's default setting, not a published cut-off.
    expect(judgeNearPointOfConvergence({ breakCm: 5.9, ageYears: 6 }).verdict).toBe('within norm');
    expect(judgeNearPointOfConvergence({ breakCm: 6, ageYears: 6 }).verdict).toBe('receded');
  });

  it('judges a grade-6-age child against 4.3 ± 3.4 cm', () => {
    // Optom Vis Sci 1998: grade 6, 4.3 ± 3.4 cm; limit 7.7 cm at the default 1 SD.
    expect(judgeNearPointOfConvergence({ breakCm: 7, ageYears: 11 }).verdict).toBe('within norm');
    const strict = judgeNearPointOfConvergence(
      { breakCm: 7, ageYears: 11 },
      { childSdMultiple: 0.5 },
    );
    expect(strict.verdict).toBe('receded'); // 4.3 + 0.5·3.4 = 6.0 cm
  });

  it('says when no cited norm covers the age', () => {
    expect(judgeNearPointOfConvergence({ breakCm: 4, ageYears: 15 }).verdict).toBe(
      'no cited norm for this age',
    );
    expect(judgeNearPointOfConvergence({ breakCm: 4, ageYears: 3 }).verdict).toBe(
      'no cited norm for this age',
    );
  });

  it('rejects a recovery nearer than the break and a negative age', () => {
    expect(() => judgeNearPointOfConvergence({ breakCm: 8, recoveryCm: 6, ageYears: 30 })).toThrow(
      /recoveryCm/,
    );
    expect(() => judgeNearPointOfConvergence({ breakCm: 8, ageYears: -2 })).toThrow(
      ClinicalInputError,
    );
  });
});
