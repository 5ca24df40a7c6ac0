// The admin routes' answers about people and tablets parse with the schemas of @fuselight/shared
// that the tablet's People and Fleet screens read them with, strictly: no field is missing, none
// is optional where the server always sends it, and none is sent that the schema does not declare.
import {
  adminUserSchema,
  fleetDeviceSchema,
  invitedPersonSchema,
  type AdminUser,
  type FleetDevice,
} from '@fuselight/shared';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import {
  bearer,
  createDevice,
  createSite,
  createUser,
  signIn,
  type TestSession,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';

const exactPerson = z.strictObject(adminUserSchema.shape);
const exactPeople = z.array(exactPerson);
const exactInvitation = z.strictObject({
  ...invitedPersonSchema.shape,
  user: exactPerson,
});
const exactTablet = z.strictObject(fleetDeviceSchema.shape);
const exactFleet = z.array(exactTablet);

/** Parses an answer; a mismatch fails with the path and message of every problem. */
function parseExactly<T>(schema: z.ZodType<T>, body: unknown): T {
  const result = schema.safeParse(body);
  if (!result.success) {
    throw new Error(
      result.error.issues.map((i) => `${i.path.map(String).join('.')}: ${i.message}`).join('; '),
    );
  }
  return result.data;
}

describe('the admin routes answer in the shapes the tablet parses', () => {
  let t: TestApp;
  let siteId: string;
  let admin: TestSession;
  const server = () => t.app.getHttpServer();

  beforeAll(async () => {
    t = await createTestApp();
    siteId = (await createSite(t)).id;
    const adminUser = await createUser(t, { role: 'admin', siteIds: [] });
    admin = await signIn(t, { user: adminUser });
  });
  afterAll(async () => {
    await t.close();
  });

  it('answers GET, POST and PATCH /api/admin/users with adminUserSchema', async () => {
    const countersigned = await createUser(t, {
      role: 'orthoptist',
      siteIds: [siteId],
      needsCountersign: true,
    });
    await signIn(t, { user: countersigned });

    const invited = await request(server())
      .post('/api/admin/users')
      .set(bearer(admin.accessToken))
      .send({ name: 'Ines Vasquez', email: 'ines@views.test', role: 'supervisor', siteIds: [] });
    expect(invited.status).toBe(201);
    const invitation = parseExactly(exactInvitation, invited.body);
    expect(invitation.user).toMatchObject({
      name: 'Ines Vasquez',
      needsCountersign: false,
      mustChangePassword: true,
      createdAt: t.clock.now().toISOString(),
      lastSignInAt: null,
    });

    const list = await request(server()).get('/api/admin/users').set(bearer(admin.accessToken));
    expect(list.status).toBe(200);
    const people = parseExactly(exactPeople, list.body);
    const byId = new Map<string, AdminUser>(people.map((p) => [p.id, p]));
    expect(byId.get(countersigned.id)).toMatchObject({
      needsCountersign: true,
      siteIds: [siteId],
      lastSignInAt: expect.any(String),
    });
    expect(byId.get(invitation.user.id)?.lastSignInAt).toBeNull();

    const changed = await request(server())
      .patch(`/api/admin/users/${countersigned.id}`)
      .set(bearer(admin.accessToken))
      .send({ needsCountersign: false });
    expect(changed.status).toBe(200);
    expect(parseExactly(exactPerson, changed.body).needsCountersign).toBe(false);
  });

  it('answers GET /api/admin/devices and revoke and retire with fleetDeviceSchema', async () => {
    const registered = await request(server())
      .post('/api/admin/devices')
      .set(bearer(admin.accessToken))
      .send({ label: 'Views pending tablet', siteIds: [siteId] });
    expect(registered.status).toBe(201);
    const active = await createDevice(t, { siteIds: [siteId], label: 'Views active tablet' });
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
    const onTablet = await signIn(t, { user: person, device: active });
    const beat = await request(server())
      .post('/api/devices/heartbeat')
      .set(bearer(onTablet.accessToken))
      .send({ appVersion: '0.4.0', outboxSize: 3 });
    expect(beat.status).toBe(200);
    const toRevoke = await createDevice(t, { siteIds: [siteId], label: 'Views lost tablet' });
    const toRetire = await createDevice(t, { siteIds: [siteId], label: 'Views old tablet' });

    const revoked = await request(server())
      .post(`/api/admin/devices/${toRevoke.deviceId}/revoke`)
      .set(bearer(admin.accessToken));
    expect(revoked.status).toBe(200);
    expect(parseExactly(exactTablet, revoked.body)).toMatchObject({
      state: 'revoked',
      revokedAt: t.clock.now().toISOString(),
    });
    const retired = await request(server())
      .post(`/api/admin/devices/${toRetire.deviceId}/retire`)
      .set(bearer(admin.accessToken));
    expect(retired.status).toBe(200);
    expect(parseExactly(exactTablet, retired.body)).toMatchObject({
      state: 'retired',
      retiredAt: t.clock.now().toISOString(),
    });

    const list = await request(server()).get('/api/admin/devices').set(bearer(admin.accessToken));
    expect(list.status).toBe(200);
    const fleet = parseExactly(exactFleet, list.body);
    const byId = new Map<string, FleetDevice>(fleet.map((d) => [d.id, d]));
    expect(byId.get(registered.body.deviceId)).toMatchObject({
      state: 'pending',
      enrolledAt: null,
      enrolmentExpiresAt: registered.body.expiresAt,
      lastSeenAt: null,
    });
    expect(byId.get(active.deviceId)).toMatchObject({
      state: 'active',
      enrolledAt: expect.any(String),
      enrolmentExpiresAt: null,
      appVersion: '0.4.0',
      outboxSize: 3,
    });
    expect(new Set(fleet.map((d) => d.state))).toEqual(
      new Set(['pending', 'active', 'revoked', 'retired']),
    );
  });

  it('would refuse an answer that left out createdAt or needsCountersign', async () => {
    const list = await request(server()).get('/api/admin/users').set(bearer(admin.accessToken));
    const [first] = list.body as Record<string, unknown>[];
    const { createdAt: _createdAt, ...withoutCreatedAt } = first ?? {};
    expect(() => parseExactly(exactPeople, [withoutCreatedAt])).toThrow(/^0\.createdAt: /);
    const { needsCountersign: _needs, ...withoutCountersign } = first ?? {};
    expect(() => parseExactly(exactPerson, withoutCountersign)).toThrow(/^needsCountersign: /);
    expect(() => parseExactly(exactPerson, { ...first, passwordHash: 'x' })).toThrow(
      /passwordHash/,
    );
  });
});
