// Requests of the Review desk routes, validated by the global zod pipe. Every message names the
// field it is about.
import { z } from 'zod';
import { COLLECTIONS } from '@fuselight/shared';

export const visitIdParamSchema = z.uuid({ error: 'id must be a visit id (a UUID)' });
export const recordIdParamSchema = z.uuid({ error: 'id must be a record id (a UUID)' });
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
