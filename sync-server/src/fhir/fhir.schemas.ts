// Requests of the FHIR routes, validated by the global zod pipe; every message names its field.
import { z } from 'zod';

export const visitIdParamSchema = z.uuid({ error: 'id must be a visit id (a UUID)' });

export const bulkExportQuerySchema = z
  .object({
    since: z.iso.datetime({
      offset: true,
      error: 'since: give the time as ISO 8601 with a zone, e.g. 2026-12-01T00:00:00Z',
    }),
    site: z.uuid({ error: 'site: must be a site id (a UUID)' }).optional(),
  })
  .strict();
export type BulkExportQuery = z.infer<typeof bulkExportQuerySchema>;
