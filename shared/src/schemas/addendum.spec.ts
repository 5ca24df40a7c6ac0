import { describe, expect, it } from 'vitest';
import { fieldMeta, requiredFields, validateFields, validateRecord } from './registry';
import { COLLECTION_LABELS } from '../clinical/section-labels';
import { CLINICIAN_ID, RECORD_ID, placement } from './test-ids.fixture';

const written = {
  ...placement,
  authorId: CLINICIAN_ID,
  writtenAt: '2026-12-02T10:15:00.000Z',
  text: 'Parent called: glasses broken, review brought forward.',
};

function errorsOf(result: ReturnType<typeof validateFields>) {
  if (result.ok) throw new Error('expected the validation to fail');
  return result.errors;
}

describe('the addendum collection', () => {
  it('accepts an Addendum written on a tablet: placement, author, time and text', () => {
    expect(validateRecord('addendum', written)).toEqual({ ok: true, fields: written });
  });

  it('accepts the amendment a resolved dispute carries, values of any JSON shape', () => {
    const amendment = {
      ...written,
      text: 'Both tablets measured after signing; 21° confirmed',
      amendedCollection: 'amblyoscopeAngles',
      amendedRecordId: RECORD_ID,
      amendedField: 'objectiveHorizontalDeg',
      previousValue: 12,
      newValue: 21,
      conflictId: RECORD_ID,
    };
    expect(validateRecord('addendum', amendment).ok).toBe(true);
    expect(
      validateFields('addendum', { previousValue: ['glasses'], newValue: { name: 'x' } }).ok,
    ).toBe(true);
  });

  it('requires the placement, the author, the time and the text, each named', () => {
    expect([...requiredFields('addendum')].sort()).toEqual(
      ['authorId', 'patientId', 'siteId', 'text', 'visitId', 'writtenAt'].sort(),
    );
    const errors = errorsOf(validateRecord('addendum', { siteId: placement.siteId }));
    expect(errors.map((e) => e.message)).toEqual([
      'Visit is required',
      'Patient is required',
      'Author is required',
      'Written at is required',
      'Addendum text is required',
    ]);
  });

  it('refuses an empty or blank text and one that cannot be cleared', () => {
    expect(errorsOf(validateRecord('addendum', { ...written, text: '   ' }))).toEqual([
      { field: 'text', message: 'Addendum text cannot be empty' },
    ]);
    expect(errorsOf(validateFields('addendum', { text: null }))).toEqual([
      { field: 'text', message: 'Addendum text is required and cannot be cleared' },
    ]);
  });

  it('names the field of a bad amendment: unknown collection, bad field name, bad time', () => {
    const errors = errorsOf(
      validateFields('addendum', {
        amendedCollection: 'angles',
        amendedField: 'objective horizontal',
        writtenAt: 'yesterday',
      }),
    );
    expect(errors.map((e) => e.field)).toEqual(['amendedCollection', 'amendedField', 'writtenAt']);
    expect(errors[0]!.message).toMatch(/^Amended section must be one of: Patient details, Visit, /);
    expect(errors[1]!.message).toBe(
      'Amended field must be a field name like objectiveHorizontalDeg',
    );
  });

  it('labels every field in words, and names each collection it can amend', () => {
    expect(fieldMeta.addendum.text).toMatchObject({ label: 'Addendum text', required: true });
    expect(fieldMeta.addendum.previousValue).toMatchObject({
      label: 'Value before',
      required: false,
    });
    expect(fieldMeta.addendum.amendedCollection.options).toContainEqual({
      value: 'amblyoscopeAngles',
      label: 'Amblyoscope angles',
    });
    expect(COLLECTION_LABELS.addendum).toBe('Addendum');
  });
});
