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
});
export type VisitFields = z.infer<typeof visitSchema>;
