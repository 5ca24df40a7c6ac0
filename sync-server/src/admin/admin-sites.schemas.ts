import { z } from 'zod';

function isTimeZone(value: string): boolean {
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: value });
    return true;
  } catch {
    return false;
  }
}

const name = z
  .string({ error: 'give the site a name' })
  .trim()
  .min(1, { error: 'cannot be empty' })
  .max(120, { error: 'at most 120 characters' });
const kind = z.enum(['clinic', 'outreach'], { error: 'must be clinic or outreach' });
const address = z.string().trim().max(300, { error: 'at most 300 characters' }).nullable();
const timeZone = z
  .string({ error: 'must be an IANA time zone such as Europe/London' })
  .refine(isTimeZone, { error: 'must be an IANA time zone such as Europe/London' });

export const createSiteSchema = z.object({
  name,
  kind,
  address: address.optional(),
  timeZone: timeZone.optional(),
});

export const updateSiteSchema = z
  .object({
    name: name.optional(),
    kind: kind.optional(),
    address: address.optional(),
    timeZone: timeZone.optional(),
  })
  .strict()
  .refine((patch) => Object.keys(patch).length > 0, {
    error: 'send at least one of name, kind, address, timeZone',
  });

export const siteIdParamSchema = z.uuid({ error: 'must be a site id (a UUID)' });
