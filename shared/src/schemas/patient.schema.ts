// The patient record: identity and referral details, scoped to one site.
import { z } from 'zod';
import { calendarDate, choice, compositeField, emailAddress, id, text } from './field-types.schema';

export const referrerSchema = compositeField(
  z.object({
    name: text('Referrer name', { max: 200, min: 1 }),
    email: emailAddress('Referrer e-mail').nullish(),
  }),
  { label: 'Referrer', kind: 'object' },
);
export type Referrer = z.infer<typeof referrerSchema>;

export const patientSchema = z.object({
  siteId: id('Site'),
  givenName: text('Given name', { max: 100, min: 1 }),
  familyName: text('Family name', { max: 100, min: 1 }),
  dateOfBirth: calendarDate('Date of birth'),
  clinicNumber: text('Clinic number', { max: 40, min: 1 }),
  sex: choice('Sex', { female: 'Female', male: 'Male', other: 'Other', unknown: 'Not recorded' }, [
    'female',
    'male',
    'other',
    'unknown',
  ]).nullish(),
  referrer: referrerSchema.nullish(),
  email: emailAddress('Patient e-mail').nullish(),
  notes: text('Notes', { max: 4000 }).nullish(),
});
export type PatientFields = z.infer<typeof patientSchema>;

/**
 * Why a date of birth cannot be accepted on `today` (YYYY-MM-DD, given by the caller so that this
 * stays pure), or null when it can. Dates compare as strings because both are YYYY-MM-DD.
 */
export function dateOfBirthProblem(dateOfBirth: string, today: string): string | null {
  if (!calendarDate('Date of birth').safeParse(dateOfBirth).success) {
    return 'Date of birth must be a real date written YYYY-MM-DD';
  }
  if (dateOfBirth > today) return 'Date of birth cannot be in the future';
  return null;
}

/** The patient schema with the date of birth checked against `today`, for the registration form. */
export function patientSchemaAsOf(today: string) {
  return patientSchema.extend({
    dateOfBirth: calendarDate('Date of birth').refine(
      (value) => dateOfBirthProblem(value, today) === null,
      { error: 'Date of birth cannot be in the future' },
    ),
  });
}
