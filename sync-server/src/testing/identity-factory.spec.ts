import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bearer, createDevice, createSite, createUser, signIn } from './identity-factory';
import { createTestApp, type TestApp } from './test-app';

describe('identity test factories', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it('signs a desk user in through the real login route with the person’s sites', async () => {
    const site = await createSite(t);
    const user = await createUser(t, { role: 'orthoptist', siteIds: [site.id] });
    const session = await signIn(t, { user });
    expect(session.deviceId).toBeNull();
    expect(session.user).toEqual({
      id: user.id,
      name: user.name,
      email: user.email,
      role: 'orthoptist',
      siteIds: [site.id],
    });
    const me = await request(t.app.getHttpServer()).get('/api/me').set(bearer(session.accessToken));
    expect(me.status).toBe(200);
    expect(me.body.deviceId).toBeNull();
  });

  it('binds a tablet session to the tablet and to the sites both serve', async () => {
    const main = await createSite(t);
    const outreach = await createSite(t, { kind: 'outreach' });
    const user = await createUser(t, { role: 'outreach', siteIds: [main.id, outreach.id] });
    const device = await createDevice(t, { siteIds: [outreach.id] });
    const session = await signIn(t, { user, device });
    expect(session.deviceId).toBe(device.deviceId);
    expect(session.user.siteIds).toEqual([outreach.id]);
    const me = await request(t.app.getHttpServer())
      .get('/api/devices/me')
      .set(bearer(session.accessToken));
    expect(me.status).toBe(200);
    expect(me.body).toMatchObject({
      deviceId: device.deviceId,
      state: 'active',
      siteIds: [outreach.id],
    });
  });
});
