import { describe, expect, it } from 'vitest';
import { CLINICAL_CAUTION } from '../clinical/caution';
import { ClinicalInputError } from '../clinical/clinical-input.error';
import { INTERPRETATION_LABEL, type LetterBlock } from './letter-layout';
import { buildClinicLetter } from './build-letter';
import { buildExerciseHandout, STOP_AND_ASK_ADVICE } from './build-handout';
import { exampleLetterInput, exampleVisits } from './letter-example.fixture';
import { letterPlainText } from './letter-text';
import { ageInYears, longDate } from './dates';

function blocksOf<T extends LetterBlock['type']>(blocks: LetterBlock[], type: T) {
  return blocks.filter((b): b is Extract<LetterBlock, { type: T }> => b.type === type);
}

describe('buildClinicLetter', () => {
  const layout = buildClinicLetter(exampleLetterInput);

  it('puts the clinic from the site settings in the letterhead, one address line per part', () => {
    expect(layout.letterhead).toEqual({
      clinicName: 'Harbourside Eye Clinic',
      addressLines: ['14 Quay Street', 'Port Averly'],
    });
  });

  it('identifies the patient by name, date of birth and clinic number', () => {
    expect(layout.identifiers).toEqual([
      { label: 'Patient', value: 'Tamsin Orrery' },
      { label: 'Date of birth', value: '9 March 2016' },
      { label: 'Clinic number', value: 'HB-20417' },
    ]);
  });

  it('gives the objective angle in degrees and prism dioptres beside the previous visit', () => {
    const [table] = blocksOf(layout.blocks, 'findings');
    const row = table!.rows.find((r) => r.label === 'Objective angle (amblyoscope)');
    // 8° → 100·tan 8° = 14.05Δ; 11° → 19.44Δ (definition of the prism dioptre, Δ = 100·tan θ).
    expect(row).toEqual({
      label: 'Objective angle (amblyoscope)',
      current: 'exo 8.0° (14.1Δ)',
      previous: 'exo 11.0° (19.4Δ)',
    });
    expect(table!.columns).toEqual([
      'Finding',
      'This visit (1 Dec 2026)',
      'Previous visit (18 Aug 2026)',
    ]);
  });

  it('writes prism cover test readings in Δ with their degrees and the base', () => {
    const [table] = blocksOf(layout.blocks, 'findings');
    const row = table!.rows.find((r) => r.label === 'Prism cover test, distance');
    // 20Δ → atan(0.2) = 11.31°.
    expect(row?.current).toBe('exo 20.0Δ (11.3°), base in');
  });

  it('names the cover test finding in the trade’s words', () => {
    const [table] = blocksOf(layout.blocks, 'findings');
    expect(table!.rows.find((r) => r.label === 'Cover test, distance')?.current).toBe(
      'exotropia, left eye, fair control',
    );
  });

  it('labels computed interpretations as support for clinical judgement', () => {
    const [block] = blocksOf(layout.blocks, 'interpretation');
    expect(block!.label).toBe(INTERPRETATION_LABEL);
    expect(block!.items[0]).toMatch(/^Retinal correspondence: .*normal retinal correspondence/);
    // A 10-year-old's break of 8 cm against the clinical module's cited child table (limit 7.7 cm).
    expect(block!.items[1]).toMatch(
      /^Near point of convergence: receded \(break 8.0 cm is beyond 7.7 cm/,
    );
    expect(layout.caution).toBe(CLINICAL_CAUTION);
  });

  it('charts the objective angle across all three visits in date order', () => {
    const [trend] = blocksOf(layout.blocks, 'trend');
    expect(trend!.points.map((p) => [p.label, p.value])).toEqual([
      ['12 May 2026', -14],
      ['18 Aug 2026', -11],
      ['1 Dec 2026', -8],
    ]);
    expect(trend!.points[0]!.valueText).toBe('exo 14.0° (24.9Δ)');
  });

  it('lists the plan, exercises and follow-up', () => {
    const text = letterPlainText(layout);
    expect(text).toContain('Management: Exercises, Review.');
    expect(text).toContain('Exercise prescribed: Dot card convergence, 5 minutes twice a day.');
    expect(text).toContain('Follow-up in 8 weeks.');
  });

  it('signs a final letter with the finalising date and a draft as not yet finalised', () => {
    expect(layout.signature).toEqual({
      name: 'Wren Ashdown',
      role: 'Orthoptist',
      statusLine: 'Finalised 1 December 2026',
    });
    const draft = buildClinicLetter({
      ...exampleLetterInput,
      letter: { status: 'draft', kind: 'referrer' },
    });
    expect(draft.signature?.statusLine).toBe('Draft — not yet finalised');
    expect(draft.status).toBe('draft');
  });

  it('says there is nothing to compare with at a first visit', () => {
    const first = buildClinicLetter({
      ...exampleLetterInput,
      current: exampleVisits.first,
      earlier: [],
    });
    const [table] = blocksOf(first.blocks, 'findings');
    expect(table!.rows.every((r) => r.previous === null)).toBe(true);
    expect(letterPlainText(first)).toContain('first visit on record');
    expect(blocksOf(first.blocks, 'trend')).toEqual([]);
  });

  it('uses what the clinician wrote on the letter record in place of the default words', () => {
    const edited = buildClinicLetter({
      ...exampleLetterInput,
      letter: {
        ...exampleLetterInput.letter,
        opening: 'Dear Anselm, a short update.',
        subject: 'Tamsin: December review',
      },
    });
    expect(edited.title).toBe('Tamsin: December review');
    expect(edited.blocks[0]).toEqual({ type: 'paragraph', text: 'Dear Anselm, a short update.' });
  });

  it('refuses a malformed visit date naming the field', () => {
    expect(() =>
      buildClinicLetter({
        ...exampleLetterInput,
        current: { ...exampleVisits.third, visit: { id: 'x', date: '01/12/2026' } },
      }),
    ).toThrow(ClinicalInputError);
  });
});

describe('buildExerciseHandout', () => {
  const input = {
    clinic: exampleLetterInput.clinic,
    patient: exampleLetterInput.patient,
    letter: { kind: 'handout' as const, status: 'draft' as const },
    visit: exampleVisits.third.visit,
    plan: exampleVisits.third.plan,
    clinician: exampleLetterInput.clinician,
    issuedOn: '2026-12-01',
  };

  it('lists the prescribed exercises in plain words with the advice to stop if symptoms worsen', () => {
    const text = letterPlainText(buildExerciseHandout(input));
    expect(text).toContain('• Dot card convergence, 5 minutes twice a day');
    expect(text).toContain(STOP_AND_ASK_ADVICE);
    expect(STOP_AND_ASK_ADVICE).toMatch(
      /Stop the exercises and contact the clinic for advice if your symptoms get worse/,
    );
    expect(text).toContain('in about 8 weeks');
    expect(text).toContain(CLINICAL_CAUTION);
  });

  it('refuses to build a handout when no exercise was prescribed', () => {
    expect(() =>
      buildExerciseHandout({ ...input, plan: { ...input.plan, exercisesPrescribed: [] } }),
    ).toThrow(/plan.exercisesPrescribed/);
  });
});

describe('letter dates', () => {
  it('writes dates in words and counts whole years of age', () => {
    expect(longDate('2026-01-05')).toBe('5 January 2026');
    expect(ageInYears('2016-03-09', '2026-03-08')).toBe(9);
    expect(ageInYears('2016-03-09', '2026-03-09')).toBe(10);
  });
});
