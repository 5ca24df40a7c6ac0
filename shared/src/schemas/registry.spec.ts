import { describe, expect, it } from 'vitest';
import {
  COLLECTIONS,
  SCHEMA_VERSION,
  SECTION_COLLECTIONS,
  fieldMeta,
  isCollectionName,
  recordSchemas,
  requiredFields,
  sectionDefaults,
  validateFields,
  validateRecord,
} from './registry';
import { CLINICIAN_ID, PATIENT_ID, SITE_ID, placement } from './test-ids.fixture';

function errorsOf(result: ReturnType<typeof validateFields>) {
  if (result.ok) throw new Error('expected the validation to fail');
  return result.errors;
}

const patient = {
  siteId: SITE_ID,
  givenName: 'Ama',
  familyName: 'Okafor',
  dateOfBirth: '2016-04-09',
  clinicNumber: 'FL-00123',
};

describe('the collection registry', () => {
  it('is schema version 1', () => {
    expect(SCHEMA_VERSION).toBe(1);
  });

  it('lists the twenty collections by their contract names, each with a schema', () => {
    expect(COLLECTIONS).toEqual([
      'patient',
      'visit',
      'amblyoscopeSetup',
      'simultaneousPerception',
      'amblyoscopeAngles',
      'suppressionScotoma',
      'fusion',
      'fusionalRanges',
      'grossStereopsis',
      'visualAcuity',
      'coverTest',
      'prismCoverTest',
      'nearPointConvergence',
      'accommodation',
      'stereoacuity',
      'motility',
      'plan',
      'attachment',
      'letter',
      'addendum',
    ]);
    expect(Object.keys(recordSchemas).sort()).toEqual([...COLLECTIONS].sort());
  });

  it('tells a collection name from anything else', () => {
    expect(isCollectionName('fusionalRanges')).toBe(true);
    expect(isCollectionName('fusionalRange')).toBe(false);
    expect(isCollectionName(3)).toBe(false);
  });

  it('keeps the envelope out of every record shape and scopes every record to a site', () => {
    for (const collection of COLLECTIONS) {
      const fields = Object.keys(recordSchemas[collection].shape);
      expect(fields).not.toContain('id');
      expect(fields).not.toContain('version');
      expect(fields).not.toContain('deleted');
      expect(requiredFields(collection)).toContain('siteId');
    }
  });

  it('places every section, attachment, letter and addendum in a visit of a patient', () => {
    for (const collection of [
      ...SECTION_COLLECTIONS,
      'attachment',
      'letter',
      'addendum',
    ] as const) {
      expect(requiredFields(collection)).toEqual(expect.arrayContaining(['visitId', 'patientId']));
      if (collection !== 'attachment' && collection !== 'letter' && collection !== 'addendum') {
        expect(Object.keys(recordSchemas[collection].shape)).toContain('skippedReason');
      }
    }
  });

  it('gives every field a label in words rather than its code name', () => {
    for (const collection of COLLECTIONS) {
      for (const [field, meta] of Object.entries(fieldMeta[collection])) {
        expect(meta.label, `${collection}.${field}`).not.toBe(field);
        expect(meta.label.length).toBeGreaterThan(1);
      }
    }
  });

  it('labels angles, prisms, acuity and distances with their units', () => {
    expect(fieldMeta.amblyoscopeAngles.objectiveHorizontalDeg).toMatchObject({
      label: 'Objective horizontal angle',
      unit: '°',
      min: -90,
      max: 90,
    });
    expect(fieldMeta.amblyoscopeAngles.subjectiveVerticalPd.unit).toBe('Δ');
    expect(fieldMeta.visualAcuity.rightDistanceCorrectedLogMar.unit).toBe('logMAR');
    expect(fieldMeta.nearPointConvergence.breakCm.unit).toBe('cm');
    expect(fieldMeta.amblyoscopeSetup.interpupillaryDistanceMm.unit).toBe('mm');
    expect(fieldMeta.stereoacuity.valueArcsec.unit).toBe('″');
    expect(fieldMeta.fusion.result.options).toEqual([
      { value: 'present', label: 'Present' },
      { value: 'absent', label: 'Absent' },
      { value: 'notTested', label: 'Not tested' },
    ]);
  });

  it('marks identity fields required and findings optional', () => {
    expect(fieldMeta.patient.familyName.required).toBe(true);
    expect(fieldMeta.patient.notes.required).toBe(false);
    expect(fieldMeta.amblyoscopeAngles.objectiveHorizontalDeg.required).toBe(false);
  });
});

describe('the tables worked out on first read', () => {
  it('lists every collection, and gives the same table at every read', () => {
    expect(Object.keys(fieldMeta)).toEqual([...COLLECTIONS]);
    expect(Object.keys(sectionDefaults)).toEqual([...SECTION_COLLECTIONS]);
    const first = fieldMeta.fusionalRanges;
    expect(fieldMeta.fusionalRanges).toBe(first);
    expect(sectionDefaults.coverTest).toBe(sectionDefaults.coverTest);
    expect(requiredFields('patient')).toBe(requiredFields('patient'));
    // Once read, a table cannot be replaced.
    expect(() => {
      (fieldMeta as Record<string, unknown>).fusionalRanges = {};
    }).toThrow(TypeError);
    expect(fieldMeta.fusionalRanges).toBe(first);
  });
});

describe('section defaults', () => {
  it('exist for every section and are accepted as a change', () => {
    for (const collection of SECTION_COLLECTIONS) {
      const defaults = sectionDefaults[collection];
      expect(Object.keys(defaults).length).toBeGreaterThan(1);
      expect(validateFields(collection, defaults).ok, collection).toBe(true);
    }
  });

  it('make a valid full record once placed in a visit', () => {
    for (const collection of SECTION_COLLECTIONS) {
      const record = { ...sectionDefaults[collection], ...placement };
      expect(validateRecord(collection, record).ok, collection).toBe(true);
    }
  });

  it('leave findings unrecorded instead of guessing and start lists empty', () => {
    expect(sectionDefaults.amblyoscopeSetup.dialsZeroed).toBeNull();
    expect(sectionDefaults.amblyoscopeAngles.objectiveHorizontalDeg).toBeNull();
    expect(sectionDefaults.grossStereopsis.trials).toEqual([]);
    expect(sectionDefaults.plan.management).toEqual([]);
    expect(sectionDefaults.fusion).not.toHaveProperty('visitId');
  });
});

describe('validateRecord', () => {
  it('accepts a complete patient', () => {
    const result = validateRecord('patient', {
      ...patient,
      sex: 'female',
      referrer: { name: 'Dr K. Mensah', email: 'k.mensah@example.org' },
      notes: null,
    });
    expect(result).toEqual({
      ok: true,
      fields: {
        ...patient,
        sex: 'female',
        referrer: { name: 'Dr K. Mensah', email: 'k.mensah@example.org' },
        notes: null,
      },
    });
  });

  it('accepts a draft visit', () => {
    const result = validateRecord('visit', {
      siteId: SITE_ID,
      patientId: PATIENT_ID,
      date: '2026-12-01',
      clinicianId: CLINICIAN_ID,
      status: 'draft',
      reason: 'Review of intermittent exotropia',
      needsCountersign: true,
    });
    expect(result.ok).toBe(true);
  });

  it('lists every missing required field by name', () => {
    const result = validateRecord('patient', { siteId: SITE_ID, givenName: 'Ama' });
    expect(errorsOf(result)).toEqual([
      { field: 'familyName', message: 'Family name is required' },
      { field: 'dateOfBirth', message: 'Date of birth is required' },
      { field: 'clinicNumber', message: 'Clinic number is required' },
    ]);
  });

  it('treats an undefined value as absent in a full record, and as an error in changed fields', () => {
    const full = validateRecord('patient', {
      siteId: SITE_ID,
      givenName: 'Ama',
      familyName: undefined,
      notes: undefined,
    });
    expect(errorsOf(full)).toEqual([
      { field: 'familyName', message: 'Family name is required' },
      { field: 'dateOfBirth', message: 'Date of birth is required' },
      { field: 'clinicNumber', message: 'Clinic number is required' },
    ]);
    expect(errorsOf(validateFields('patient', { notes: undefined, familyName: null }))).toEqual([
      { field: 'notes', message: 'Notes has no value; send null to clear it' },
      { field: 'familyName', message: 'Family name is required and cannot be cleared' },
    ]);
    const cleared = validateRecord('patient', {
      siteId: SITE_ID,
      givenName: 'Ama',
      familyName: 'Okafor',
      dateOfBirth: '2016-04-09',
      clinicNumber: 'FL-0001',
      notes: undefined,
    });
    expect(cleared.ok && Object.keys(cleared.fields)).toEqual([
      'siteId',
      'givenName',
      'familyName',
      'dateOfBirth',
      'clinicNumber',
    ]);
  });

  it('refuses a section that is not placed in a visit', () => {
    const errors = errorsOf(validateRecord('fusion', { siteId: SITE_ID, result: 'present' }));
    expect(errors.map((error) => error.field).sort()).toEqual(['patientId', 'visitId']);
  });

  it('refuses unknown fields and envelope keys in a record', () => {
    const errors = errorsOf(
      validateRecord('visit', {
        siteId: SITE_ID,
        patientId: PATIENT_ID,
        date: '2026-12-01',
        clinicianId: CLINICIAN_ID,
        status: 'draft',
        addenda: [],
        version: 3,
      }),
    );
    expect(errors).toEqual([
      { field: 'addenda', message: 'unknown field addenda for collection visit' },
      {
        field: 'version',
        message: 'version is part of the record envelope, not a field of collection visit',
      },
    ]);
  });

  it('refuses an unknown collection and a record that is not an object', () => {
    expect(errorsOf(validateRecord('patients', patient))[0]?.message).toBe(
      'unknown collection patients',
    );
    expect(errorsOf(validateRecord('patient', [patient]))[0]?.message).toBe(
      'a patient record must be an object',
    );
  });
});

describe('validateFields on a partial change', () => {
  it('accepts only the changed fields and returns them parsed', () => {
    expect(
      validateFields('amblyoscopeAngles', { objectiveHorizontalDeg: 12.5, slideUsed: '  kite  ' }),
    ).toEqual({ ok: true, fields: { objectiveHorizontalDeg: 12.5, slideUsed: 'kite' } });
  });

  it('accepts an empty change, as a delete carries', () => {
    expect(validateFields('patient', {})).toEqual({ ok: true, fields: {} });
  });

  it('refuses a field the collection does not have', () => {
    expect(errorsOf(validateFields('fusion', { stereoGrade: 'present' }))).toEqual([
      { field: 'stereoGrade', message: 'unknown field stereoGrade for collection fusion' },
    ]);
  });

  it('lets null clear an optional field but not a required one', () => {
    expect(validateFields('patient', { notes: null, sex: null, referrer: null }).ok).toBe(true);
    expect(errorsOf(validateFields('patient', { familyName: null }))).toEqual([
      { field: 'familyName', message: 'Family name is required and cannot be cleared' },
    ]);
  });

  it('refuses an undefined value and says to send null instead', () => {
    expect(errorsOf(validateFields('fusion', { slideUsed: undefined }))[0]?.message).toBe(
      'Slide used has no value; send null to clear it',
    );
  });

  it('reports every bad field of one change, each by name', () => {
    const errors = errorsOf(
      validateFields('amblyoscopeAngles', {
        objectiveHorizontalDeg: 95,
        subjectiveVerticalPd: 'ten',
        subjectiveTorsionDeg: 3,
      }),
    );
    expect(errors).toEqual([
      {
        field: 'objectiveHorizontalDeg',
        message: 'Objective horizontal angle must be between −90° and +90°',
      },
      { field: 'subjectiveVerticalPd', message: 'Subjective vertical angle must be a number' },
    ]);
  });

  it('names the path inside a composite value', () => {
    const errors = errorsOf(
      validateFields('patient', { referrer: { name: 'Dr Mensah', email: 'not-an-address' } }),
    );
    expect(errors).toEqual([
      { field: 'referrer.email', message: 'Referrer e-mail must be an e-mail address' },
    ]);
  });

  it('refuses fields that are not an object', () => {
    expect(errorsOf(validateFields('patient', 'familyName=Okafor'))[0]?.message).toBe(
      'fields for collection patient must be an object',
    );
  });

  it('does not take an inherited property for a field', () => {
    expect(validateFields('patient', { toString: 'x' }).ok).toBe(false);
  });

  it('infers field types from the collection', () => {
    const result = validateFields('visit', { status: 'signed', signedBy: CLINICIAN_ID });
    if (!result.ok) throw new Error('expected a valid change');
    const status: 'draft' | 'signed' | 'countersigned' | undefined = result.fields.status;
    expect(status).toBe('signed');
  });
});
