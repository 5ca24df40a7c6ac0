// One sitting with a patient. Signing facts are separate fields so that a signature and a
// supervisor's countersignature, made on different devices, merge without a conflict. Addenda
// are their own records (addendum.schema.ts) rather than one array here.
import { z } from 'zod';
import { calendarDate, choice, id, instant, text, yesNo } from './field-types.schema';

export const VISIT_STATUSES = ['draft', 'signed', 'countersigned'] as const;
export const visitStatusSchema = choice(
  'Visit status',
  { draft: 'Draft', signed: 'Signed', countersigned: 'Countersigned' },
  VISIT_STATUSES,
);
export type VisitStatus = z.infer<typeof visitStatusSchema>;

export const HOSPITAL_RECORD_STATES = ['waiting', 'sent', 'refused'] as const;
export type HospitalRecordState = (typeof HOSPITAL_RECORD_STATES)[number];

export const visitSchema = z.object({
  siteId: id('Site'),
  patientId: id('Patient'),
  date: calendarDate('Visit date'),
  clinicianId: id('Clinician'),
  reason: text('Reason for visit', { max: 500 }).nullish(),
  status: visitStatusSchema,
  needsCountersign: yesNo('Needs countersigning').nullish(),
  signedBy: id('Signed by').nullish(),
  signedAt: instant('Signed at').nullish(),
  countersignedBy: id('Countersigned by').nullish(),
  countersignedAt: instant('Countersigned at').nullish(),
  returnedComment: text('Comment on return', { max: 2000 }).nullish(),
  // Written by the server's FHIR hand-off (docs/fhir.md), never by a tablet: whether the signed
  // visit reached the hospital record, when that state was reached, and why it was refused.
  hospitalRecordState: choice(
    'Hospital record',
    { waiting: 'Waiting to send', sent: 'Sent', refused: 'Refused' },
    HOSPITAL_RECORD_STATES,
  ).nullish(),
  hospitalRecordAt: instant('Hospital record state at').nullish(),
  hospitalRecordNote: text('Hospital record note', { max: 1000 }).nullish(),
});
export type VisitFields = z.infer<typeof visitSchema>;
