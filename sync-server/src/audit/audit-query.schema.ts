import { z } from 'zod';

export const auditQuerySchema = z.object({
  scope: z.enum(['account', 'clinical'], { error: 'must be account or clinical' }),
  cursor: z
    .string()
    .regex(/^\d{1,18}$/, { error: 'must be the `next` value of the previous page' })
    .optional(),
  limit: z.coerce
    .number({ error: 'must be a whole number from 1 to 200' })
    .int({ error: 'must be a whole number from 1 to 200' })
    .min(1, { error: 'must be at least 1' })
    .max(200, { error: 'must be at most 200' })
    .optional(),
});
export type AuditQuery = z.infer<typeof auditQuerySchema>;
