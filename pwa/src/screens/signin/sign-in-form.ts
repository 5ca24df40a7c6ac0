// The sign-in form's fields and their rules: the server's login request, without the tablet's id.
import { loginRequestSchema } from '@fuselight/shared/identity';
import type { z } from 'zod';

export const signInFormSchema = loginRequestSchema.pick({ email: true, password: true });
export type SignInForm = z.infer<typeof signInFormSchema>;
