import { describe, expect, it } from 'vitest';
import { exampleLetterInput, exampleVisits } from '../letters/letter-example.fixture';
import { letterInterpretations } from '../letters/visit-findings';
import { CLINICAL_CAUTION } from './caution';
import {
  ageOnDate,
  bsvGradesOf,
  computeOrRefuse,
  correspondenceOf,
  fusionalRangesOf,
  interpretVisit,
  nearPointOf,
} from './interpretation';
import { ClinicalInputError } from './clinical-input.error';

// The module only reads Section fields and calls the computations (each checked against its
// sources in its own spec); these checks are that the Visit, the Bench and letters read the same
// fields the same way. Check values: angle of anomaly = objective − subjective, NRC within the
// 5° tolerance (docs/clinical-reference.md, Millodot; the tolerance is common practice, [memory]); the SP → fusion → stereopsis hierarchy
// (docs/clinical-reference.md, "The assessment"); NPC recovery is never nearer than the break.
describe('interpretation of recorded Sections', () => {
  it('waits for both horizontal angles, then classifies correspondence', () => {
    expect(correspondenceOf({ objectiveHorizontalDeg: -8 })).toBeNull();
    const result = correspondenceOf({ objectiveHorizontalDeg: -8, subjectiveHorizontalDeg: -7.5 });
    expect(result).toMatchObject({ ok: true, value: { result: 'NRC', angleOfAnomalyDeg: -0.5 } });
  });

  it('gives a refused input back as its words, and lets other errors through', () => {
    expect(
      computeOrRefuse(() => {
        throw new ClinicalInputError('breakCm', 'must not be negative');
      }),
    ).toEqual({ ok: false, problem: 'breakCm: must not be negative' });
    expect(() =>
      computeOrRefuse(() => {
        throw new TypeError('a bug');
      }),
    ).toThrow(TypeError);
  });

  it('grades BSV from the Sections, skipping a skipped Section, stereoacuity before a run', () => {
    const grades = bsvGradesOf({
      simultaneousPerception: { result: 'absent', suppressingEye: 'left' },
      fusion: { result: 'present' },
      grossStereopsis: { skippedReason: 'patient tired', trials: [] },
      stereoacuity: { valueArcsec: 120 },
    });
    expect(grades).toMatchObject({
      simultaneousPerception: 'absent',
      fusion: 'present',
      stereopsis: 'present',
      stereoNote: null,
    });
    expect(grades.problems.map((p) => [p.lowerGrade, p.higherGrade])).toContainEqual([
      'simultaneousPerception',
      'fusion',
    ]);
    expect(bsvGradesOf({ fusion: { result: 'present', skippedReason: 'no time' } }).fusion).toBe(
      'not tested',
    );
  });

  it('reads fusional ranges from 0° on the Bench but asks for the subjective angle on the Visit', () => {
    const ranges = { convergenceBreakDeg: 18, convergenceRecoveryDeg: 14 };
    const bench = fusionalRangesOf({}, ranges);
    expect(bench?.ok && bench.value.startNote).toMatch(/read from 0°/);
    const visit = interpretVisit({ fusionalRanges: ranges }, {}).items.find(
      (i) => i.key === 'ranges',
    );
    expect(visit).toMatchObject({ summary: null, tone: 'neutral' });
    expect(visit?.lines[0]).toMatch(/record it to derive the amplitudes/);
  });

  it('refuses a near point recovery nearer than its break, on screen and in a letter', () => {
    const npc = { breakCm: 10, recoveryCm: 6 };
    expect(nearPointOf(npc, 10)).toMatchObject({ ok: false });
    const item = interpretVisit({ nearPointConvergence: npc }, { ageYears: 10 }).items[0];
    expect(item).toMatchObject({ key: 'npc', tone: 'attention', summary: null });
    expect(item?.lines[0]).toMatch(/^Not interpreted: recoveryCm/);
    const findings = { visit: exampleVisits.third.visit, nearPointConvergence: npc };
    expect(letterInterpretations(findings, exampleLetterInput.patient)).toEqual([]);
  });

  it('puts the Visit interpretation in the letter, word for word, with the caution beside it', () => {
    const visit = exampleVisits.third;
    const age = ageOnDate(exampleLetterInput.patient.dateOfBirth, visit.visit.date);
    expect(age).toBe(10); // 9 March 2016 → 1 December 2026
    const shown = interpretVisit(visit, { ageYears: age! });
    expect(shown.caution).toBe(CLINICAL_CAUTION);
    const correspondence = shown.items.find((i) => i.key === 'correspondence')!;
    const npc = shown.items.find((i) => i.key === 'npc')!;
    expect(letterInterpretations(visit, exampleLetterInput.patient)).toEqual([
      `Retinal correspondence: ${correspondence.summary}`,
      `Near point of convergence: ${npc.summary}`,
    ]);
    expect(correspondence.lines.at(-1)).toContain(correspondence.summary!);
  });
});
