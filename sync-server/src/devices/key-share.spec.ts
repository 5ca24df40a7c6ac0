import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  bearer,
  createSite,
  createUser,
  signIn,
  type TestSession,
  type TestUser,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';

// The tablet's key share (docs/threat-model.md) and the no-store rule for answers that carry
// patient data or identity.
describe('the tablet key share and uncached answers', () => {
  let t: TestApp;
  let siteId: string;
  let admin: TestSession;
  let adminUser: TestUser;
  const server = () => t.app.getHttpServer();

  beforeAll(async () => {
    t = await createTestApp();
    siteId = (await createSite(t)).id;
    adminUser = await createUser(t, { role: 'admin', siteIds: [] });
    admin = await signIn(t, { user: adminUser });
  });
  afterAll(async () => {
    await t.close();
  });

  async function enrolledTablet() {
    const ticket = await request(server())
      .post('/api/admin/devices')
      .set(bearer(admin.accessToken))
      .send({ label: `Outreach ${Math.random()}`, siteIds: [siteId] });
    const enrolled = await request(server())
      .post('/api/devices/enrol')
      .send({ code: ticket.body.enrolmentCode });
    expect(enrolled.status).toBe(200);
    const device = {
      deviceId: enrolled.body.deviceId as string,
      deviceSecret: enrolled.body.deviceSecret as string,
    };
    const signInHere = async () =>
      signIn(t, {
        user: await createUser(t, { role: 'orthoptist', siteIds: [siteId] }),
        device,
      });
    return { deviceId: device.deviceId, signInHere };
  }

  const share = (session: TestSession) =>
    request(server()).get('/api/devices/me/key-share').set(bearer(session.accessToken));

  it('gives every person on one tablet the same 32-byte share, another tablet another, uncached', async () => {
    const one = await enrolledTablet();
    const first = await share(await one.signInHere());
    const second = await share(await one.signInHere());
    expect(first.status).toBe(200);
    expect(first.headers['cache-control']).toBe('no-store');
    expect(Buffer.from(first.body.share, 'base64')).toHaveLength(32);
    expect(second.body.share).toBe(first.body.share);
    const other = await share(await (await enrolledTablet()).signInHere());
    expect(other.body.share).not.toBe(first.body.share);
  });

  it('refuses a desk session, and a revoked tablet (which is told to erase)', async () => {
    const desk = await signIn(t, {
      user: await createUser(t, { role: 'orthoptist', siteIds: [siteId] }),
    });
    expect((await share(desk)).status).toBe(403);

    const tablet = await enrolledTablet();
    const session = await tablet.signInHere();
    await request(server())
      .post(`/api/admin/devices/${tablet.deviceId}/revoke`)
      .set(bearer(admin.accessToken))
      .expect(200);
    const refused = await share(session);
    expect(refused.status).toBe(401);
    expect(refused.body).toMatchObject({ erase: true });
  });

  it('sends pull pages and every other API answer with Cache-Control: no-store', async () => {
    const session = await (await enrolledTablet()).signInHere();
    const pull = await request(server())
      .get('/api/sync/pull')
      .query({ since: 0 })
      .set(bearer(session.accessToken));
    expect(pull.headers['cache-control']).toBe('no-store');
    const me = await request(server()).get('/api/devices/me').set(bearer(session.accessToken));
    expect(me.headers['cache-control']).toBe('no-store');
    const login = await request(server()).post('/api/auth/login').send({});
    expect(login.headers['cache-control']).toBe('no-store');
  });
});
