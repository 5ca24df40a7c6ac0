import { z } from 'zod';

export const refreshRequestSchema = z.object({
  refreshToken: z
    .string({ error: 'send the refresh token you were given at sign-in' })
    .min(1, { error: 'cannot be empty' })
    .max(512, { error: 'is too long to be a refresh token' }),
});
