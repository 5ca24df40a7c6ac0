// The clinic's settings an admin changes (GET and PATCH /api/admin/settings) and every tablet
// follows (sent with GET /api/devices/me). A setting never stored has its default.
import { z } from 'zod';

/** Hours unsynced edits may wait on a tablet before it warns on every screen. */
export const DEFAULT_UNSYNCED_WARNING_HOURS = 24;

const unsyncedWarningHours = z
  .int({ error: 'must be a whole number of hours' })
  .min(1, { error: 'must be at least 1 hour' })
  .max(720, { error: 'must be at most 720 hours (30 days)' });

export const clinicSettingsSchema = z.object({
  unsyncedWarningHours,
});
export type ClinicSettings = z.infer<typeof clinicSettingsSchema>;

export const DEFAULT_CLINIC_SETTINGS: ClinicSettings = {
  unsyncedWarningHours: DEFAULT_UNSYNCED_WARNING_HOURS,
};

/** A change of some settings; a name that is not a setting is refused. */
export const updateClinicSettingsSchema = z.strictObject({
  unsyncedWarningHours: unsyncedWarningHours.optional(),
});
export type ClinicSettingsChange = z.infer<typeof updateClinicSettingsSchema>;
