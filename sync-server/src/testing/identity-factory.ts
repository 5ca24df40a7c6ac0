// Test factories for people, sites and tablets. They go through the real services (so passwords
// are argon2-hashed and tablets really enrolled) and sign in through the real login route, so a
// token from here is exactly what a tablet or a desk would hold.
//
//   const site = await createSite(t);
//   const nurse = await createUser(t, { role: 'orthoptist', siteIds: [site.id] });
//   const tablet = await createDevice(t, { siteIds: [site.id] });
//   const { accessToken } = await signIn(t, { user: nurse, device: tablet });
import type { Role, SessionUser } from '@fuselight/shared';
import request from 'supertest';
import { EntityManager } from '@mikro-orm/postgresql';
import { AdminSitesService, type SiteView } from '../admin/admin-sites.service';
import { Site } from '../sites/site.entity';
import { DevicesService } from '../devices/devices.service';
import { UsersService } from '../users/users.service';
import type { TestApp } from './test-app';

export const TEST_PASSWORD = 'a-test-password-of-decent-length';

let sequence = 0;
const next = (): number => ++sequence;

export interface TestUser {
  id: string;
  name: string;
  email: string;
  password: string;
  role: Role;
  siteIds: string[];
  needsCountersign: boolean;
}

export interface TestDevice {
  deviceId: string;
  deviceSecret: string;
  siteIds: string[];
  label: string;
}

export interface TestSession {
  accessToken: string;
  refreshToken: string;
  user: SessionUser;
  /** The tablet the session is bound to, or null for a desk session. */
  deviceId: string | null;
}

/**
 * A site, created as an admin would. With `id`, the site gets that fixed id instead (for suites
 * whose scenario names its sites up front); the row is then written directly, as the admin
 * service assigns ids itself.
 */
export async function createSite(
  t: TestApp,
  overrides: Partial<Pick<SiteView, 'id' | 'name' | 'kind' | 'address' | 'timeZone'>> = {},
): Promise<SiteView> {
  const n = next();
  const input = {
    name: overrides.name ?? `Test site ${n}`,
    kind: overrides.kind ?? 'clinic',
    address: overrides.address ?? null,
    timeZone: overrides.timeZone ?? 'Europe/London',
  };
  if (overrides.id === undefined) return t.app.get(AdminSitesService).create(null, input);
  const em = t.app.get(EntityManager).fork();
  const site = em.create(Site, { id: overrides.id, ...input, createdAt: t.clock.now() });
  await em.persist(site).flush();
  return { ...input, id: site.id, createdAt: site.createdAt.toISOString() };
}

export async function createUser(
  t: TestApp,
  options: {
    role: Role;
    siteIds: string[];
    needsCountersign?: boolean;
    name?: string;
    email?: string;
    password?: string;
  },
): Promise<TestUser> {
  const n = next();
  const password = options.password ?? TEST_PASSWORD;
  const created = await t.app.get(UsersService).create(null, {
    name: options.name ?? `Test ${options.role} ${n}`,
    email: options.email ?? `${options.role}.${n}.${process.pid}@test.fuselight.test`,
    role: options.role,
    siteIds: options.siteIds,
    needsCountersign: options.needsCountersign ?? false,
    password,
  });
  return {
    id: created.id,
    name: created.name,
    email: created.email,
    password,
    role: created.role,
    siteIds: created.siteIds,
    needsCountersign: created.needsCountersign,
  };
}

/** Registers a tablet for `siteIds` and enrols it; returns the secret its sign-ins carry. */
export async function createDevice(
  t: TestApp,
  options: { siteIds: string[]; label?: string },
): Promise<TestDevice> {
  const devices = t.app.get(DevicesService);
  const label = options.label ?? `Test tablet ${next()}`;
  const ticket = await devices.register(null, { label, siteIds: options.siteIds });
  const enrolled = await devices.enrol(ticket.enrolmentCode, 'identity-factory');
  return {
    deviceId: enrolled.deviceId,
    deviceSecret: enrolled.deviceSecret,
    siteIds: options.siteIds,
    label,
  };
}

/** Signs in through POST /api/auth/login; with a device the tokens are bound to that tablet. */
export async function signIn(
  t: TestApp,
  options: {
    user: Pick<TestUser, 'email' | 'password'>;
    device?: Pick<TestDevice, 'deviceId' | 'deviceSecret'>;
  },
): Promise<TestSession> {
  const res = await request(t.app.getHttpServer())
    .post('/api/auth/login')
    .send({
      email: options.user.email,
      password: options.user.password,
      ...(options.device ? { deviceSecret: options.device.deviceSecret } : {}),
    });
  if (res.status !== 200) {
    throw new Error(`signIn failed with ${res.status}: ${JSON.stringify(res.body)}`);
  }
  const body = res.body as Omit<TestSession, 'deviceId'>;
  return { ...body, deviceId: options.device?.deviceId ?? null };
}

/** A person of `role` at `siteIds`, signed in (on a fresh tablet for those sites when `onTablet`). */
export async function signInAs(
  t: TestApp,
  options: { role: Role; siteIds: string[]; needsCountersign?: boolean; onTablet?: boolean },
): Promise<TestSession & { person: TestUser; device: TestDevice | null }> {
  const person = await createUser(t, options);
  const device = options.onTablet ? await createDevice(t, { siteIds: options.siteIds }) : null;
  const session = await signIn(t, { user: person, ...(device ? { device } : {}) });
  return { ...session, person, device };
}

/** Revokes a tablet as an admin would (its sessions answer 401 with erase: true afterwards). */
export async function revokeDevice(t: TestApp, deviceId: string): Promise<void> {
  await t.app.get(DevicesService).revoke(null, deviceId);
}

export const bearer = (token: string): { Authorization: string } => ({
  Authorization: `Bearer ${token}`,
});
