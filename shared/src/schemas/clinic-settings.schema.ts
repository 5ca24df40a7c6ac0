// The clinic's settings an admin changes (GET and PATCH /api/admin/settings) and every tablet
// follows (sent with GET /api/devices/me). A setting never stored has its default.
import { z } from 'zod';

/** Hours unsynced edits may wait on a tablet before it warns on every screen. */
export const DEFAULT_UNSYNCED_WARNING_HOURS = 24;

const unsyncedWarningHours = z
  .int({ error: 'must be a whole number of hours' })
  .min(1, { error: 'must be at least 1 hour' })
  .max(720, { error: 'must be at most 720 hours (30 days)' });

/** The kinds of character a passphrase policy may require, in the order they are named. */
export const PASSPHRASE_CHARACTER_CLASSES = ['lowercase', 'uppercase', 'digit', 'symbol'] as const;
export type PassphraseCharacterClass = (typeof PASSPHRASE_CHARACTER_CLASSES)[number];

/** No passphrase policy may ask for fewer characters than a passphrase has anyway. */
export const PASSPHRASE_POLICY_MIN_LENGTH = 12;

/**
 * What a person's secret must be on a tablet without a platform authenticator (where the PIN
 * alone guards the data key against a copied profile, docs/threat-model.md): `pin-only`
 * accepts a PIN of 6 digits with that risk (the Fleet screen states it); `passphrase` asks for
 * a passphrase of at least `minLength` characters with each of `requiredClasses`. A tablet with
 * a platform authenticator combines its hardware share with the PIN and needs neither.
 */
export const unlockWithoutHardwareSchema = z.discriminatedUnion(
  'rule',
  [
    z.strictObject({ rule: z.literal('pin-only') }),
    z.strictObject({
      rule: z.literal('passphrase'),
      minLength: z
        .int({ error: 'must be a whole number of characters' })
        .min(PASSPHRASE_POLICY_MIN_LENGTH, {
          error: `must be at least ${PASSPHRASE_POLICY_MIN_LENGTH} characters`,
        })
        .max(128, { error: 'must be at most 128 characters' }),
      requiredClasses: z
        .array(
          z.enum(PASSPHRASE_CHARACTER_CLASSES, {
            error: 'must be one of lowercase, uppercase, digit, symbol',
          }),
        )
        .refine((classes) => new Set(classes).size === classes.length, {
          error: 'names a kind of character twice',
        }),
    }),
  ],
  { error: "must have rule 'pin-only' or 'passphrase'" },
);
export type UnlockWithoutHardware = z.infer<typeof unlockWithoutHardwareSchema>;

export const clinicSettingsSchema = z.object({
  unsyncedWarningHours,
  unlockWithoutHardware: unlockWithoutHardwareSchema,
});
export type ClinicSettings = z.infer<typeof clinicSettingsSchema>;

export const DEFAULT_CLINIC_SETTINGS: ClinicSettings = {
  unsyncedWarningHours: DEFAULT_UNSYNCED_WARNING_HOURS,
  unlockWithoutHardware: { rule: 'pin-only' },
};

/** A change of some settings; a name that is not a setting is refused. */
export const updateClinicSettingsSchema = z.strictObject({
  unsyncedWarningHours: unsyncedWarningHours.optional(),
  unlockWithoutHardware: unlockWithoutHardwareSchema.optional(),
});
export type ClinicSettingsChange = z.infer<typeof updateClinicSettingsSchema>;
