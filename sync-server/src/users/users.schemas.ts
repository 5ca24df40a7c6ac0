import { z } from 'zod';
import { roleSchema } from '@fuselight/shared';

const siteIds = z
  .array(z.uuid({ error: 'must be a site id (a UUID)' }), { error: 'must be a list of site ids' })
  .max(50, { error: 'at most 50 sites' });

const name = z
  .string({ error: 'give the person’s name' })
  .trim()
  .min(1, { error: 'cannot be empty' })
  .max(120, { error: 'at most 120 characters' });

export const inviteUserSchema = z.object({
  name,
  email: z
    .email({ error: 'must be an e-mail address' })
    .max(254, { error: 'at most 254 characters' }),
  role: roleSchema,
  siteIds,
  needsCountersign: z.boolean({ error: 'must be true or false' }).optional(),
});

export const updateUserSchema = z
  .object({
    name: name.optional(),
    role: roleSchema.optional(),
    siteIds: siteIds.optional(),
    needsCountersign: z.boolean({ error: 'must be true or false' }).optional(),
    active: z.boolean({ error: 'must be true or false' }).optional(),
  })
  .strict()
  .refine((patch) => Object.keys(patch).length > 0, {
    error: 'send at least one of name, role, siteIds, needsCountersign, active',
  });

export const changePasswordSchema = z.object({
  currentPassword: z
    .string({ error: 'type your current password' })
    .min(1, { error: 'cannot be empty' })
    .max(1024),
  newPassword: z
    .string({ error: 'type a new password' })
    .min(12, { error: 'must be at least 12 characters' })
    .max(1024, { error: 'is too long' }),
});

export const userIdParamSchema = z.uuid({ error: 'must be a person’s id (a UUID)' });
