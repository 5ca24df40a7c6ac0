// Admin form shapes. Roles come from the shared identity schema; the server validates the same
// bodies with its own schemas until shared/ carries admin wire schemas (then use those here).
import {
  PASSPHRASE_CHARACTER_CLASSES,
  PASSPHRASE_POLICY_MIN_LENGTH,
  clinicSettingsSchema,
  roleSchema,
  unlockWithoutHardwareSchema,
  type ClinicSettings,
} from '@fuselight/shared';
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

/**
 * The clinic settings form: the rule for tablets without a platform authenticator laid out flat
 * (a choice, a length and kinds of character), checked with the shared schema on save.
 */
export const clinicSettingsFormSchema = z
  .object({
    unsyncedWarningHours: clinicSettingsSchema.shape.unsyncedWarningHours,
    unlockRule: z.enum(['pin-only', 'passphrase'], { error: 'Choose PIN only or a passphrase' }),
    passphraseMinLength: z.number({ error: 'Enter a number of characters' }),
    requiredClasses: z.array(z.enum(PASSPHRASE_CHARACTER_CLASSES)),
  })
  .superRefine((form, context) => {
    if (form.unlockRule !== 'passphrase') return;
    const checked = unlockWithoutHardwareSchema.safeParse(toUnlockRule(form));
    if (checked.success) return;
    for (const issue of checked.error.issues) {
      const length = issue.path[0] === 'minLength';
      context.addIssue({
        code: 'custom',
        path: [length ? 'passphraseMinLength' : 'requiredClasses'],
        message: length ? `The passphrase length ${issue.message}` : issue.message,
      });
    }
  });
export type ClinicSettingsForm = z.infer<typeof clinicSettingsFormSchema>;

function toUnlockRule(form: ClinicSettingsForm): ClinicSettings['unlockWithoutHardware'] {
  return form.unlockRule === 'pin-only'
    ? { rule: 'pin-only' }
    : {
        rule: 'passphrase',
        minLength: form.passphraseMinLength,
        requiredClasses: PASSPHRASE_CHARACTER_CLASSES.filter((c) =>
          form.requiredClasses.includes(c),
        ),
      };
}

export function clinicSettingsForm(settings: ClinicSettings): ClinicSettingsForm {
  const rule = settings.unlockWithoutHardware;
  return {
    unsyncedWarningHours: settings.unsyncedWarningHours,
    unlockRule: rule.rule,
    passphraseMinLength: rule.rule === 'passphrase' ? rule.minLength : 14,
    requiredClasses: rule.rule === 'passphrase' ? rule.requiredClasses : [],
  };
}

export function clinicSettingsFromForm(form: ClinicSettingsForm): ClinicSettings {
  return {
    unsyncedWarningHours: form.unsyncedWarningHours,
    unlockWithoutHardware: toUnlockRule(form),
  };
}

export { PASSPHRASE_POLICY_MIN_LENGTH };
