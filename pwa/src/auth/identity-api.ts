// The identity routes of the clinic server (auth, devices, admin), over the tablet's one API
// client (net/api-client.ts: an injectable fetch, one error wording). Errors carry the server's
// words and its `erase` flag (a revoked tablet); nothing here logs a token or a secret.
// The identity and admin views from their own modules, not the package's index: sign-in then
// loads these few schemas, not every record schema and the clinical core (bench:bundle).
import {
  adminUserListSchema,
  adminUserSchema,
  clinicSettingsSchema,
  fleetDeviceListSchema,
  fleetDeviceSchema,
  invitedPersonSchema,
  type AdminUser,
  type ClinicSettings,
  type ClinicSettingsChange,
  type FleetDevice,
  type KeyProtectionKind,
  type InvitedPerson,
  type UnlockWithoutHardware,
} from '@fuselight/shared/admin-views';
import {
  sessionUserSchema,
  type LoginRequest,
  type Role,
  type SessionUser,
} from '@fuselight/shared/identity';
import { z } from 'zod';
import { ApiClient, type ApiClientOptions } from '../net/api-client';

/** One site of GET /api/me/sites; checked, so a bad answer never reaches the site picker. */
export const mySiteSchema = z.object({
  id: z.uuid(),
  name: z.string().min(1),
  kind: z.enum(['clinic', 'outreach']),
  timeZone: z.string().min(1),
  /** Absent from servers older than the field; null when the site has none. */
  address: z.string().nullable().optional(),
});
export type MySite = z.infer<typeof mySiteSchema>;

/** One person of GET /api/me/colleagues: someone who shares a site with the signed-in person. */
export const colleagueSchema = z.object({
  id: z.uuid(),
  name: z.string().min(1),
  role: z.enum(['orthoptist', 'supervisor', 'admin']),
});
export type Colleague = z.infer<typeof colleagueSchema>;

export { ApiError, NetworkError, type FetchLike } from '../net/api-client';

/**
 * The server answered, but not in the shape this app reads (a server of another version, or a
 * proxy's page): the message names the route and the first field that is wrong.
 */
export class UnexpectedAnswerError extends Error {
  constructor(
    readonly route: string,
    readonly problem: string,
  ) {
    super(
      `The clinic server’s answer to ${route} is not what this app expects (${problem}); the app or the server may need updating.`,
    );
    this.name = 'UnexpectedAnswerError';
  }
}

/** Checks an answer with its shared schema; a bad one is an UnexpectedAnswerError. */
export function parseAnswer<T>(schema: z.ZodType<T>, body: unknown, route: string): T {
  const result = schema.safeParse(body);
  if (result.success) return result.data;
  const issue = result.error.issues[0];
  const path = issue?.path.map(String).join('.') ?? '';
  const problem = issue ? (path ? `${path}: ${issue.message}` : issue.message) : 'unreadable';
  throw new UnexpectedAnswerError(route, problem);
}

export interface SignInResponse {
  accessToken: string;
  refreshToken: string;
  user: SessionUser;
}
export interface EnrolResponse {
  deviceId: string;
  deviceSecret: string;
}
export interface DeviceStatus {
  state: 'pending' | 'active' | 'retired' | 'revoked';
  deviceId?: string;
  label?: string;
  siteIds?: string[];
  /** The sites whose records the tablet may hold now (absent from servers before it). */
  holdSiteIds?: string[];
  /** Optional clinic policy the server may send for offline unlock. */
  offlineUnlockHours?: number;
  maxPinAttempts?: number;
  /** The clinic setting: hours unsynced edits may wait before the tablet warns on every screen. */
  unsyncedWarningHours?: number;
  /** The clinic setting: what a secret must be on a tablet without a platform authenticator. */
  unlockWithoutHardware?: UnlockWithoutHardware;
}

export interface NewPerson {
  name: string;
  email: string;
  role: Role;
  siteIds: string[];
}
export type PersonChange = Partial<
  Pick<AdminUser, 'name' | 'role' | 'siteIds' | 'active' | 'needsCountersign'>
>;

export type SiteKind = 'clinic' | 'outreach';
export interface AdminSite {
  id: string;
  name: string;
  kind: SiteKind;
  address: string | null;
  timeZone: string;
}
export interface NewSite {
  name: string;
  kind: SiteKind;
  address?: string | null;
  timeZone?: string;
}

export interface RegisteredDevice {
  deviceId: string;
  enrolmentCode: string;
  expiresAt: string;
  qrPayload: string;
}

/** Turns a list from the server into an array whether it came bare or as { items }. */
function itemsOf<T>(body: unknown): T[] {
  if (Array.isArray(body)) return body as T[];
  if (body && typeof body === 'object' && 'items' in body) return (body as { items: T[] }).items;
  return [];
}

export type IdentityApiOptions = ApiClientOptions;

export class IdentityApi {
  private readonly client: ApiClient;

  constructor(options: IdentityApiOptions = {}) {
    this.client = new ApiClient(options);
  }

  /** One route of the clinic server; refusals and no answer are thrown in words (net/api-client). */
  request<T>(
    method: string,
    path: string,
    options: { body?: unknown; token?: string | null } = {},
  ): Promise<T> {
    return this.client.request<T>(method, path, options);
  }

  async signIn(request: LoginRequest): Promise<SignInResponse> {
    const answer = await this.request<SignInResponse>('POST', '/api/auth/login', { body: request });
    return { ...answer, user: sessionUserSchema.parse(answer.user) };
  }

  async refresh(refreshToken: string): Promise<SignInResponse> {
    const answer = await this.request<SignInResponse>('POST', '/api/auth/refresh', {
      body: { refreshToken },
    });
    return { ...answer, user: sessionUserSchema.parse(answer.user) };
  }

  signOut(token: string): Promise<void> {
    return this.request('POST', '/api/auth/logout', { token });
  }

  /** The sites the signed-in person belongs to, with their names (any role). */
  async mySites(token: string): Promise<MySite[]> {
    return z.array(mySiteSchema).parse(await this.request('GET', '/api/me/sites', { token }));
  }

  /** The people who share a site with the signed-in person, to name who signed what. */
  async colleagues(token: string): Promise<Colleague[]> {
    return z
      .array(colleagueSchema)
      .parse(await this.request('GET', '/api/me/colleagues', { token }));
  }

  enrol(code: string): Promise<EnrolResponse> {
    return this.request('POST', '/api/devices/enrol', { body: { code } });
  }

  deviceStatus(token: string): Promise<DeviceStatus> {
    return this.request('GET', '/api/devices/me', { token });
  }

  /**
   * This tablet's share of its key protection (32 bytes, base64): the server derives it from its
   * own secret and the tablet's id, and gives it only to a person signed in on the enrolled,
   * unrevoked tablet. The tablet never stores it.
   */
  async keyShare(token: string): Promise<Uint8Array> {
    const body = await this.request('GET', '/api/devices/me/key-share', { token });
    const { share } = parseAnswer(
      z.object({ share: z.base64() }),
      body,
      'GET /api/devices/me/key-share',
    );
    const bytes = Uint8Array.from(atob(share), (c) => c.charCodeAt(0));
    if (bytes.length !== 32)
      throw new Error('The clinic server sent a key share of the wrong length');
    return bytes;
  }

  heartbeat(
    token: string,
    report: { appVersion: string; outboxSize: number; keyProtection?: KeyProtectionKind },
  ): Promise<unknown> {
    return this.request('POST', '/api/devices/heartbeat', { token, body: report });
  }

  async listPeople(token: string): Promise<AdminUser[]> {
    const body = await this.request('GET', '/api/admin/users', { token });
    return parseAnswer(adminUserListSchema, body, 'GET /api/admin/users');
  }
  async invitePerson(token: string, person: NewPerson): Promise<InvitedPerson> {
    const body = await this.request('POST', '/api/admin/users', { token, body: person });
    return parseAnswer(invitedPersonSchema, body, 'POST /api/admin/users');
  }
  async changePerson(token: string, id: string, change: PersonChange): Promise<AdminUser> {
    const body = await this.request('PATCH', `/api/admin/users/${encodeURIComponent(id)}`, {
      token,
      body: change,
    });
    return parseAnswer(adminUserSchema, body, 'PATCH /api/admin/users/:id');
  }

  /** The clinic's settings (admins). */
  async clinicSettings(token: string): Promise<ClinicSettings> {
    const body = await this.request('GET', '/api/admin/settings', { token });
    return parseAnswer(clinicSettingsSchema, body, 'GET /api/admin/settings');
  }
  async changeClinicSettings(token: string, change: ClinicSettingsChange): Promise<ClinicSettings> {
    const body = await this.request('PATCH', '/api/admin/settings', { token, body: change });
    return parseAnswer(clinicSettingsSchema, body, 'PATCH /api/admin/settings');
  }

  async listSites(token: string): Promise<AdminSite[]> {
    return itemsOf<AdminSite>(await this.request('GET', '/api/admin/sites', { token }));
  }
  addSite(token: string, site: NewSite): Promise<AdminSite> {
    return this.request('POST', '/api/admin/sites', { token, body: site });
  }
  changeSite(token: string, id: string, change: Partial<NewSite>): Promise<AdminSite> {
    return this.request('PATCH', `/api/admin/sites/${encodeURIComponent(id)}`, {
      token,
      body: change,
    });
  }

  async listDevices(token: string): Promise<FleetDevice[]> {
    const body = await this.request('GET', '/api/admin/devices', { token });
    return parseAnswer(fleetDeviceListSchema, body, 'GET /api/admin/devices');
  }
  registerDevice(
    token: string,
    device: { label: string; siteIds: string[] },
  ): Promise<RegisteredDevice> {
    return this.request('POST', '/api/admin/devices', { token, body: device });
  }
  /** Replaces the sites a tablet serves (a site taken off is removed from it at its next contact). */
  async changeDeviceSites(token: string, id: string, siteIds: string[]): Promise<FleetDevice> {
    const path = `/api/admin/devices/${encodeURIComponent(id)}/sites`;
    const body = await this.request('PATCH', path, { token, body: { siteIds } });
    return parseAnswer(fleetDeviceSchema, body, 'PATCH /api/admin/devices/:id/sites');
  }
  async revokeDevice(token: string, id: string): Promise<FleetDevice> {
    const path = `/api/admin/devices/${encodeURIComponent(id)}/revoke`;
    const body = await this.request('POST', path, { token });
    return parseAnswer(fleetDeviceSchema, body, 'POST /api/admin/devices/:id/revoke');
  }
  async retireDevice(token: string, id: string): Promise<FleetDevice> {
    const path = `/api/admin/devices/${encodeURIComponent(id)}/retire`;
    const body = await this.request('POST', path, { token });
    return parseAnswer(fleetDeviceSchema, body, 'POST /api/admin/devices/:id/retire');
  }
}

export { tokenExpiry } from './session/token-expiry';
