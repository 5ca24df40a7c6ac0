// The PIN forms' schemas (react-hook-form with zod), over the rule in pin-rule.ts.
import { z } from 'zod';
import { isAcceptablePin, PIN_RULE } from './pin-rule';

export { PIN_RULE } from './pin-rule';

export const pinSchema = z
  .string({ error: 'Enter a PIN of at least 6 digits' })
  .refine((value) => isAcceptablePin(value), { error: PIN_RULE });

export const pinSetupSchema = z
  .object({ pin: pinSchema, confirm: z.string() })
  .refine((v) => v.pin === v.confirm, { path: ['confirm'], error: 'The two PINs differ' });
export type PinSetup = z.infer<typeof pinSetupSchema>;
