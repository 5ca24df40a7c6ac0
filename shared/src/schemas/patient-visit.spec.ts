import { describe, expect, it } from 'vitest';
import { dateOfBirthProblem, patientSchema, patientSchemaAsOf } from './patient.schema';
import { visitSchema } from './visit.schema';
import { CLINICIAN_ID, PATIENT_ID, SITE_ID } from './test-ids.fixture';

const patient = {
  siteId: SITE_ID,
  givenName: 'Ama',
  familyName: 'Okafor',
  dateOfBirth: '2016-04-09',
  clinicNumber: 'FL-00123',
};

function firstMessage(result: { error?: { issues: { message: string }[] } }) {
  return result.error?.issues[0]?.message;
}

describe('patient schema', () => {
  it('refuses a blank family name after trimming', () => {
    expect(firstMessage(patientSchema.safeParse({ ...patient, familyName: '   ' }))).toBe(
      'Family name cannot be empty',
    );
  });

  it('refuses a date that is not a real day or not YYYY-MM-DD', () => {
    for (const dateOfBirth of ['2023-02-29', '09/04/2016', '2016-4-9']) {
      expect(firstMessage(patientSchema.safeParse({ ...patient, dateOfBirth })), dateOfBirth).toBe(
        'Date of birth must be a real date written YYYY-MM-DD',
      );
    }
    expect(patientSchema.safeParse({ ...patient, dateOfBirth: '2024-02-29' }).success).toBe(true);
  });

  it('refuses a site that is not a UUID', () => {
    expect(firstMessage(patientSchema.safeParse({ ...patient, siteId: 'north-clinic' }))).toBe(
      'Site must be a UUID',
    );
  });

  it('checks a date of birth against the day given, not the machine clock', () => {
    expect(dateOfBirthProblem('2016-04-09', '2026-12-01')).toBeNull();
    expect(dateOfBirthProblem('2026-12-01', '2026-12-01')).toBeNull();
    expect(dateOfBirthProblem('2026-12-02', '2026-12-01')).toBe(
      'Date of birth cannot be in the future',
    );
    expect(dateOfBirthProblem('2026-13-01', '2026-12-01')).toBe(
      'Date of birth must be a real date written YYYY-MM-DD',
    );
  });

  it('gives the registration form a schema that refuses a birth after today', () => {
    const form = patientSchemaAsOf('2026-12-01');
    expect(form.safeParse(patient).success).toBe(true);
    expect(firstMessage(form.safeParse({ ...patient, dateOfBirth: '2027-01-01' }))).toBe(
      'Date of birth cannot be in the future',
    );
  });

  it('refuses an unknown sex value with the choices in words', () => {
    expect(firstMessage(patientSchema.safeParse({ ...patient, sex: 'f' }))).toBe(
      'Sex must be one of: Female, Male, Other, Not recorded',
    );
  });
});

describe('visit schema', () => {
  const visit = {
    siteId: SITE_ID,
    patientId: PATIENT_ID,
    date: '2026-12-01',
    clinicianId: CLINICIAN_ID,
    status: 'draft',
  };

  it('accepts a signed and countersigned visit', () => {
    const result = visitSchema.safeParse({
      ...visit,
      status: 'countersigned',
      signedBy: CLINICIAN_ID,
      signedAt: '2026-12-01T10:00:00.000Z',
      countersignedBy: CLINICIAN_ID,
      countersignedAt: '2026-12-02T08:15:00.000Z',
      returnedComment: null,
    });
    expect(result.success).toBe(true);
  });

  it('refuses a status outside draft, signed and countersigned', () => {
    expect(firstMessage(visitSchema.safeParse({ ...visit, status: 'closed' }))).toBe(
      'Visit status must be one of: Draft, Signed, Countersigned',
    );
  });

  it('refuses a signing time without a UTC zone', () => {
    expect(firstMessage(visitSchema.safeParse({ ...visit, signedAt: '2026-12-01 10:00' }))).toBe(
      'Signed at must be a UTC time like 2026-12-01T09:30:00.000Z',
    );
  });
});
