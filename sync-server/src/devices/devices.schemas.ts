import { keyProtectionSchema } from '@fuselight/shared';
import { z } from 'zod';

const siteIds = z
  .array(z.uuid({ error: 'must be a site id (a UUID)' }), { error: 'must be a list of site ids' })
  .min(1, { error: 'name at least one site the tablet serves' })
  .max(50, { error: 'at most 50 sites' });

export const registerDeviceSchema = z.object({
  label: z
    .string({ error: 'give the tablet a label people will recognise' })
    .trim()
    .min(1, { error: 'cannot be empty' })
    .max(80, { error: 'at most 80 characters' }),
  siteIds,
});

export const changeDeviceSitesSchema = z.object({ siteIds });

export const enrolDeviceSchema = z.object({
  code: z
    .string({ error: 'type the enrolment code an admin gave you' })
    .trim()
    .min(1, { error: 'cannot be empty' })
    .max(40, { error: 'is too long to be an enrolment code' }),
});

export const heartbeatSchema = z.object({
  appVersion: z
    .string({ error: 'send the app version' })
    .trim()
    .min(1, { error: 'cannot be empty' })
    .max(40, { error: 'at most 40 characters' }),
  outboxSize: z
    .number({ error: 'send the number of unsent edits' })
    .int({ error: 'must be a whole number' })
    .min(0, { error: 'cannot be negative' }),
  /** How the tablet's data key is protected (tablets of earlier builds do not send it). */
  keyProtection: keyProtectionSchema.optional(),
});

export const deviceIdParamSchema = z.uuid({ error: 'must be a tablet id (a UUID)' });
