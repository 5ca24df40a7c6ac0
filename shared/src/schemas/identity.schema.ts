// Who is signing in and what they may do: the login body and the user a session carries.
import { z } from 'zod';

export const ROLES = ['orthoptist', 'outreach', 'supervisor', 'admin'] as const;
export const roleSchema = z.enum(ROLES, {
  error: `role must be one of: ${ROLES.join(', ')}`,
});
export type Role = z.infer<typeof roleSchema>;

export const loginRequestSchema = z.object({
  email: z.email({ error: 'Enter your e-mail address' }).max(254),
  password: z
    .string({ error: 'Enter your password' })
    .min(1, { error: 'Enter your password' })
    .max(1024, { error: 'Password is too long' }),
  /** Present when signing in on an enrolled tablet. */
  deviceSecret: z.string().min(1, { error: 'Device secret cannot be empty' }).optional(),
});
export type LoginRequest = z.infer<typeof loginRequestSchema>;

export const sessionUserSchema = z.object({
  id: z.uuid(),
  name: z.string().min(1),
  email: z.email(),
  role: roleSchema,
  siteIds: z.array(z.uuid()),
});
export type SessionUser = z.infer<typeof sessionUserSchema>;
