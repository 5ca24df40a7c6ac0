// Requests of the Review desk routes, validated by the global zod pipe. Every message names the
// field it is about.
import { z } from 'zod';
import { COLLECTIONS } from '@fuselight/shared';

export const visitIdParamSchema = z.uuid({ error: 'id must be a visit id (a UUID)' });
export const recordIdParamSchema = z.uuid({ error: 'id must be a record id (a UUID)' });
export const disputeIdParamSchema = z.uuid({ error: 'id must be a dispute id (a UUID)' });
export const collectionParamSchema = z.enum(COLLECTIONS, {
  error: (issue) => `collection: unknown collection ${String(issue.input)}`,
});

export const returnVisitSchema = z.object({
  comment: z
    .string({ error: 'comment: write what the clinician should look at again' })
    .trim()
    .min(1, { error: 'comment: write what the clinician should look at again' })
    .max(2000, { error: 'comment: at most 2000 characters' }),
});
export type ReturnVisitRequest = z.infer<typeof returnVisitSchema>;

export const countersignVisitSchema = z.object({}).strict();

export const disputeQuerySchema = z.object({
  siteId: z.uuid({ error: 'siteId must be a site id (a UUID)' }).optional(),
  patient: z.string().trim().max(200, { error: 'patient: at most 200 characters' }).optional(),
  section: z
    .enum(COLLECTIONS, { error: (issue) => `section: unknown section ${String(issue.input)}` })
    .optional(),
  minAgeHours: z.coerce
    .number({ error: 'minAgeHours must be a number of hours' })
    .min(0, { error: 'minAgeHours cannot be negative' })
    .max(24 * 365, { error: 'minAgeHours: at most a year' })
    .optional(),
  sort: z
    .enum(['age', 'patient', 'section', 'site'], {
      error: 'sort must be one of: age, patient, section, site',
    })
    .default('age'),
  direction: z.enum(['asc', 'desc'], { error: 'direction must be asc or desc' }).default('asc'),
  page: z.coerce
    .number({ error: 'page must be a number' })
    .int({ error: 'page must be a whole number' })
    .min(1, { error: 'page starts at 1' })
    .default(1),
  pageSize: z.coerce
    .number({ error: 'pageSize must be a number' })
    .int({ error: 'pageSize must be a whole number' })
    .min(1, { error: 'pageSize must be between 1 and 100' })
    .max(100, { error: 'pageSize must be between 1 and 100' })
    .default(25),
});
export type DisputeQuery = z.infer<typeof disputeQuerySchema>;
