import { describe, expect, it } from 'vitest';
import { checkBsvGrades } from './bsv-grades';
import { ClinicalInputError } from './clinical-input.error';

// The hierarchy SP → fusion → stereopsis is from docs/clinical-reference.md ("The assessment").
describe('checkBsvGrades', () => {
  it('accepts a chart where every present grade rests on present ones below', () => {
    expect(
      checkBsvGrades({
        simultaneousPerception: 'present',
        fusion: 'present',
        stereopsis: 'absent',
      }),
    ).toEqual([]);
  });

  it('accepts grades that were not tested', () => {
    expect(
      checkBsvGrades({
        simultaneousPerception: 'not tested',
        fusion: 'present',
        stereopsis: 'present',
      }),
    ).toEqual([]);
  });

  it('flags fusion present while simultaneous perception is absent', () => {
    const found = checkBsvGrades({
      simultaneousPerception: { status: 'absent', suppressingEye: 'left' },
      fusion: 'present',
      stereopsis: 'not tested',
    });
    expect(found).toHaveLength(1);
    expect(found[0]?.lowerGrade).toBe('simultaneousPerception');
    expect(found[0]?.higherGrade).toBe('fusion');
    expect(found[0]?.message).toMatch(
      /Fusion is recorded as present while simultaneous perception/,
    );
  });

  it('lists every broken pair when stereopsis sits on two absent grades', () => {
    const found = checkBsvGrades({
      simultaneousPerception: 'absent',
      fusion: 'absent',
      stereopsis: 'present',
    });
    expect(found.map((f) => `${f.lowerGrade}<${f.higherGrade}`)).toEqual([
      'simultaneousPerception<stereopsis',
      'fusion<stereopsis',
    ]);
  });

  it('rejects a suppressing eye on a grade that is not absent', () => {
    expect(() =>
      checkBsvGrades({
        simultaneousPerception: { status: 'present', suppressingEye: 'right' } as never,
        fusion: 'present',
        stereopsis: 'present',
      }),
    ).toThrow(ClinicalInputError);
  });

  it('rejects an unknown status', () => {
    expect(() =>
      checkBsvGrades({
        simultaneousPerception: 'maybe' as never,
        fusion: 'present',
        stereopsis: 'present',
      }),
    ).toThrow(/simultaneousPerception/);
  });
});
