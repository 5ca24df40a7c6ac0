// Admin form shapes. Roles come from the shared identity schema; the server validates the same
// bodies with its own schemas until shared/ carries admin wire schemas (then use those here).
import { roleSchema } from '@fuselight/shared';
import { z } from 'zod';

export const invitePersonSchema = z.object({
  name: z.string().trim().min(1, { error: 'Enter the person’s name' }).max(200),
  email: z.email({ error: 'Enter a valid e-mail address' }).max(254),
  role: roleSchema,
  siteIds: z.array(z.string()),
});
export type InvitePersonForm = z.infer<typeof invitePersonSchema>;

export const siteFormSchema = z.object({
  name: z.string().trim().min(1, { error: 'Enter the site’s name' }).max(200),
  kind: z.enum(['clinic', 'outreach'], { error: 'Choose clinic or outreach' }),
  address: z.string().trim().max(500),
  timeZone: z.string().trim().min(1, { error: 'Enter a time zone, e.g. Europe/London' }),
});
export type SiteForm = z.infer<typeof siteFormSchema>;

export const registerTabletSchema = z.object({
  label: z
    .string()
    .trim()
    .min(1, { error: 'Give the tablet a name people will recognise' })
    .max(100),
  siteIds: z.array(z.string()).min(1, { error: 'Choose at least one site the tablet serves' }),
});
export type RegisterTabletForm = z.infer<typeof registerTabletSchema>;
