// What the admin routes answer about people and tablets (GET/POST/PATCH /api/admin/users and
// GET/POST /api/admin/devices): the server builds its answers as these types, and the tablet's
// People and Fleet screens parse the answers with these schemas. One declaration for both ends.
import { z } from 'zod';
import { roleSchema } from './identity.schema';

const isoTime = z.iso.datetime({ error: 'must be an ISO 8601 time in UTC' });

export const DEVICE_STATES = ['pending', 'active', 'retired', 'revoked'] as const;
export const deviceStateSchema = z.enum(DEVICE_STATES, {
  error: `state must be one of: ${DEVICE_STATES.join(', ')}`,
});
/** A tablet's life: registered (pending), enrolled (active), then retired or revoked. */
export type DeviceState = z.infer<typeof deviceStateSchema>;

/** One person as an admin sees them (People). */
export const adminUserSchema = z.object({
  id: z.uuid({ error: 'must be a person’s id (a UUID)' }),
  name: z.string().min(1, { error: 'cannot be empty' }),
  email: z.email({ error: 'must be an e-mail address' }),
  role: roleSchema,
  siteIds: z.array(z.uuid({ error: 'must be a site id (a UUID)' })),
  /** Their Signed visits wait for a supervisor's countersignature. */
  needsCountersign: z.boolean({ error: 'must be true or false' }),
  active: z.boolean({ error: 'must be true or false' }),
  /** Still on the one-time initial password. */
  mustChangePassword: z.boolean({ error: 'must be true or false' }),
  createdAt: isoTime,
  lastSignInAt: isoTime.nullable(),
});
export type AdminUser = z.infer<typeof adminUserSchema>;

export const adminUserListSchema = z.array(adminUserSchema, { error: 'must be a list of people' });

/** The answer to an invitation: the person and their one-time initial password (shown once). */
export const invitedPersonSchema = z.object({
  user: adminUserSchema,
  initialPassword: z.string().min(1, { error: 'cannot be empty' }),
});
export type InvitedPerson = z.infer<typeof invitedPersonSchema>;

/** One tablet of the Fleet as an admin sees it. */
/**
 * How a tablet's data key is protected (docs/threat-model.md), as the tablet last reported it:
 * `unprotected` (no key yet: data from before the upgrade, until the next unlock), `server-only`
 * (only an online sign-in opens it), `pin-only` (at least one person's slot opens with a PIN of
 * digits), `passphrase` (every person's slot needs a passphrase of 12 or more characters),
 * `hardware` (every person's slot needs the PIN and the tablet's platform authenticator, its WebAuthn
 * PRF output; pwa/src/data/crypto/hardware-share.ts).
 */
export const KEY_PROTECTION_KINDS = [
  'unprotected',
  'server-only',
  'pin-only',
  'passphrase',
  'hardware',
] as const;
export const keyProtectionSchema = z.enum(KEY_PROTECTION_KINDS, {
  error: `must be one of ${KEY_PROTECTION_KINDS.join(', ')}`,
});
export type KeyProtectionKind = z.infer<typeof keyProtectionSchema>;

export const fleetDeviceSchema = z.object({
  id: z.uuid({ error: 'must be a tablet id (a UUID)' }),
  label: z.string().min(1, { error: 'cannot be empty' }),
  state: deviceStateSchema,
  siteIds: z.array(z.uuid({ error: 'must be a site id (a UUID)' })),
  /** When an admin registered it. */
  createdAt: isoTime,
  enrolledAt: isoTime.nullable(),
  /** Expiry of an enrolment code still waiting to be used; null when there is none. */
  enrolmentExpiresAt: isoTime.nullable(),
  /** Last heartbeat, with the app version and Outbox size it reported. */
  lastSeenAt: isoTime.nullable(),
  appVersion: z.string().nullable(),
  outboxSize: z.int({ error: 'must be a whole number' }).min(0).nullable(),
  /** How its data key is protected, from its last heartbeat; null until it reports it. */
  keyProtection: keyProtectionSchema.nullable().optional(),
  retiredAt: isoTime.nullable(),
  revokedAt: isoTime.nullable(),
});
export type FleetDevice = z.infer<typeof fleetDeviceSchema>;

export const fleetDeviceListSchema = z.array(fleetDeviceSchema, {
  error: 'must be a list of tablets',
});

// The clinic's settings travel with the admin views (the Fleet screen edits them).
export * from './clinic-settings.schema';
