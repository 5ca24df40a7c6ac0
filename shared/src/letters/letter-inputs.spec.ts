import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import {
  isLegacyAddendumPlan,
  pickSectionRecord,
  sectionRecordId,
} from '../schemas/section-records';
import { buildClinicLetter } from './build-letter';
import { buildExerciseHandout } from './build-handout';
import { exampleLetterInput, exampleVisits } from './letter-example.fixture';
import {
  earlierVisitsOf,
  letterInputsOf,
  letterIssuedOn,
  letterLayoutOf,
  visitFindingsOf,
} from './letter-inputs';
import { exampleLetterRecords } from './letter-records.fixture';
import { letterPlainText } from './letter-text';

const VISIT = '0193a1b2-0000-7000-8000-0000000000aa';
let counter = 0;
const newId = () => `0193a1b2-0000-7000-8000-${String((counter += 1)).padStart(12, '0')}`;

const fixture = () =>
  exampleLetterRecords({
    siteId: '01935a00-0000-7000-8000-000000000001',
    patientId: '01935a00-0000-7000-8000-0000000a0001',
    visitIds: [
      '01935a00-0000-7000-8000-0000000b0001',
      '01935a00-0000-7000-8000-0000000b0002',
      '01935a00-0000-7000-8000-0000000b0003',
    ],
    letterId: exampleLetterInput.letter.id!,
    clinicianId: '01935a00-0000-7000-8000-000000000103',
    newId,
  });

const context = {
  clinic: exampleLetterInput.clinic,
  clinician: exampleLetterInput.clinician,
  today: '2026-12-04',
};

/** UUID version 5 written out from RFC 9562 §5.5 (SHA-1 of namespace bytes + name), by hand. */
function rfcUuidV5(name: string, namespace: string): string {
  const hash = createHash('sha1')
    .update(Buffer.from(namespace.replace(/-/g, ''), 'hex'))
    .update(Buffer.from(name, 'utf8'))
    .digest();
  const bytes = hash.subarray(0, 16);
  bytes[6] = (bytes[6]! & 0x0f) | 0x50;
  bytes[8] = (bytes[8]! & 0x3f) | 0x80;
  const hex = bytes.toString('hex');
  return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`;
}

describe('the visit Section rule', () => {
  const own = sectionRecordId(VISIT, 'coverTest');
  const low = '00000000-0000-7000-8000-000000000001';
  const high = 'ffffffff-ffff-7fff-bfff-ffffffffffff';

  it('derives a Section id as a name-based UUID of the visit and collection (RFC 9562 §5.5)', () => {
    expect(own).toBe(rfcUuidV5(`${VISIT}/coverTest`, '6f1e4a52-93c4-4d0b-9a67-2f8b1c5d7e31'));
    expect(sectionRecordId(VISIT, 'plan')).not.toBe(own);
  });

  it('takes the record with the derived id over a lower and a higher one', () => {
    const records = [
      { id: high, fields: {} },
      { id: own, fields: {} },
      { id: low, fields: {} },
    ];
    expect(pickSectionRecord(VISIT, 'coverTest', records)?.id).toBe(own);
  });

  it('takes the lowest id when no record has the derived id, in any order', () => {
    expect(
      pickSectionRecord(VISIT, 'coverTest', [
        { id: high, fields: {} },
        { id: low, fields: {} },
      ])?.id,
    ).toBe(low);
    expect(
      pickSectionRecord(VISIT, 'coverTest', [
        { id: low, fields: {} },
        { id: high, fields: {} },
      ])?.id,
    ).toBe(low);
  });

  it('never takes a deleted record or an earlier app Addendum kept as a plan', () => {
    const addendum = { impression: 'Addendum ·\t2026-12-02T09:00:00.000Z\tx\tW\ntext' };
    expect(isLegacyAddendumPlan(addendum)).toBe(true);
    expect(isLegacyAddendumPlan({ impression: 'Addendum to follow' })).toBe(false);
    expect(
      pickSectionRecord(VISIT, 'plan', [
        { id: low, fields: addendum },
        { id: high, fields: { impression: 'Stable' } },
      ])?.id,
    ).toBe(high);
    expect(
      pickSectionRecord(VISIT, 'coverTest', [{ id: own, deleted: true, fields: {} }]),
    ).toBeNull();
    // An ordinary impression that only mentions an addendum is the plan.
    expect(
      pickSectionRecord(VISIT, 'plan', [{ id: low, fields: { impression: 'Addendum' } }])?.id,
    ).toBe(low);
  });
});

describe('letterInputsOf: which records feed a letter', () => {
  it('builds the example letter from its records, passing over the rival and legacy records', () => {
    const { records } = fixture();
    const layout = letterLayoutOf(records, context);
    expect(layout).toEqual(buildClinicLetter(exampleLetterInput));
    const text = letterPlainText(layout);
    expect(text).toContain('exo 8.0° (14.1Δ)');
    expect(text).toContain('exo 11.0° (19.4Δ)');
    // Not the rivals' 30°, 25° or 40°, nor the Addendum in the plan's place.
    expect(text).not.toMatch(/exo (30|25|40)\.0°/);
    expect(text).not.toContain('reading is more comfortable');
    expect(text).toContain('Impression: Intermittent exotropia, better controlled than in August.');
  });

  it('reads each visit from its own records only, whatever order they come in', () => {
    const { records } = fixture();
    const shuffled = [...records.sections].reverse();
    const current = visitFindingsOf(records.visit, shuffled);
    expect(current.amblyoscopeAngles?.objectiveHorizontalDeg).toBe(
      exampleVisits.third.amblyoscopeAngles?.objectiveHorizontalDeg,
    );
    expect(current.plan?.impression).toBe(exampleVisits.third.plan.impression);
    const second = visitFindingsOf(records.patientVisits[1]!, shuffled);
    expect(second.amblyoscopeAngles?.objectiveHorizontalDeg).toBe(-11);
  });

  it('compares with live visits on or before the letter visit only, oldest first', () => {
    const { records } = fixture();
    const later = { id: 'later', collection: 'visit', fields: { date: '2027-01-05' } };
    const gone = { id: 'gone', collection: 'visit', deleted: true, fields: { date: '2026-06-01' } };
    const ids = earlierVisitsOf(records.visit, [
      later,
      gone,
      ...[...records.patientVisits].reverse(),
    ]).map((v) => v.id);
    expect(ids).toEqual([records.patientVisits[0]!.id, records.patientVisits[1]!.id]);
  });

  it('dates a final letter by the day it was finalised and a draft by today', () => {
    expect(letterIssuedOn({ finalisedAt: '2026-12-01T15:20:00.000Z' }, '2026-12-04')).toBe(
      '2026-12-01',
    );
    expect(letterIssuedOn({ status: 'draft' }, '2026-12-04')).toBe('2026-12-04');
    const { records } = fixture();
    const draft = {
      ...records,
      letter: {
        ...records.letter,
        fields: { ...records.letter.fields, status: 'draft', finalisedAt: undefined },
      },
    };
    const inputs = letterInputsOf(draft, context);
    expect(inputs.kind === 'referrer' && inputs.input.issuedOn).toBe('2026-12-04');
    expect(letterLayoutOf(draft, context).dateLine).toBe('4 December 2026');
  });

  it('builds a handout from the visit plan, not from an Addendum kept as a plan', () => {
    const { records } = fixture();
    const handout = {
      ...records,
      letter: { ...records.letter, fields: { ...records.letter.fields, kind: 'handout' } },
    };
    expect(letterLayoutOf(handout, context)).toEqual(
      buildExerciseHandout({
        clinic: exampleLetterInput.clinic,
        patient: exampleLetterInput.patient,
        letter: { ...exampleLetterInput.letter, kind: 'handout' },
        visit: { ...exampleVisits.third.visit, id: records.visit.id },
        plan: records.sections.find((s) => s.id === sectionRecordId(records.visit.id, 'plan'))!
          .fields,
        clinician: exampleLetterInput.clinician,
        issuedOn: '2026-12-01',
      }),
    );
  });
});
