import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { ATTEMPT_LIMITS } from '../auth/attempt-limiter.service';
import {
  bearer,
  createSite,
  createUser,
  signIn,
  type TestSession,
  type TestUser,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';

describe('the Fleet: registering, enrolling, revoking and retiring tablets', () => {
  let t: TestApp;
  let siteId: string;
  let admin: TestSession;
  let adminUser: TestUser;
  const server = () => t.app.getHttpServer();
  const register = (label = 'Room 2 tablet', siteIds = [siteId]) =>
    request(server())
      .post('/api/admin/devices')
      .set(bearer(admin.accessToken))
      .send({ label, siteIds });
  const enrol = (code: string, address = '10.9.0.1') =>
    request(server()).post('/api/devices/enrol').set('X-Forwarded-For', address).send({ code });

  beforeAll(async () => {
    t = await createTestApp();
    siteId = (await createSite(t)).id;
    adminUser = await createUser(t, { role: 'admin', siteIds: [] });
  });
  // Some tests move the clock past a token's lifetime; each test starts with a fresh sign-in.
  beforeEach(async () => {
    admin = await signIn(t, { user: adminUser });
  });
  afterAll(async () => {
    await t.close();
  });

  async function enrolledTabletSession(): Promise<{
    deviceId: string;
    session: TestSession;
    secret: string;
  }> {
    const ticket = await register();
    const enrolled = await enrol(ticket.body.enrolmentCode);
    expect(enrolled.status).toBe(200);
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
    const session = await signIn(t, {
      user: person,
      device: { deviceId: enrolled.body.deviceId, deviceSecret: enrolled.body.deviceSecret },
    });
    return { deviceId: enrolled.body.deviceId, session, secret: enrolled.body.deviceSecret };
  }

  it('registers a tablet with a 24-hour single-use code and a QR payload carrying it', async () => {
    const res = await register();
    expect(res.status).toBe(201);
    expect(res.body).toEqual({
      deviceId: expect.any(String),
      enrolmentCode: expect.stringMatching(/^[0-9A-Z]{4}-[0-9A-Z]{4}-[0-9A-Z]{4}$/),
      expiresAt: new Date(t.clock.now().getTime() + 24 * 3600 * 1000).toISOString(),
      qrPayload: expect.stringContaining(res.body.enrolmentCode),
    });
    const list = await request(server()).get('/api/admin/devices').set(bearer(admin.accessToken));
    const row = list.body.find((d: { id: string }) => d.id === res.body.deviceId);
    expect(row).toMatchObject({ state: 'pending', siteIds: [siteId], label: 'Room 2 tablet' });
    expect(JSON.stringify(list.body)).not.toContain(res.body.enrolmentCode);
  });

  it('names the field when a registration is malformed or names an unknown site', async () => {
    const blank = await register('', [siteId]);
    expect(blank.status).toBe(400);
    expect(blank.body.message).toContain('body.label');
    const unknown = await register('Tablet', ['01935a00-0000-7000-8000-00000000dead']);
    expect(unknown.status).toBe(400);
    expect(unknown.body.message).toContain('body.siteIds.0');
  });

  it('enrols with a code once; the same code a second time is refused', async () => {
    const ticket = await register();
    const first = await enrol(ticket.body.enrolmentCode.toLowerCase().replaceAll('-', ' '));
    expect(first.status).toBe(200);
    expect(first.body).toEqual({
      deviceId: ticket.body.deviceId,
      deviceSecret: expect.any(String),
    });
    const second = await enrol(ticket.body.enrolmentCode);
    expect(second.status).toBe(400);
    expect(second.body.message).toContain('code:');
    expect(second.body).not.toHaveProperty('deviceSecret');
  });

  it('hands out one secret when the same code is sent twice at the same moment', async () => {
    const ticket = await register();
    const [a, b] = await Promise.all([
      enrol(ticket.body.enrolmentCode),
      enrol(ticket.body.enrolmentCode),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 400]);
  });

  it('refuses a code after 24 hours', async () => {
    const ticket = await register();
    t.clock.advance(24 * 3600 * 1000 + 1000);
    const res = await enrol(ticket.body.enrolmentCode);
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('expired');
  });

  it('records a heartbeat and shows it in the Fleet list', async () => {
    const { deviceId, session } = await enrolledTabletSession();
    const beat = await request(server())
      .post('/api/devices/heartbeat')
      .set(bearer(session.accessToken))
      .send({ appVersion: '0.3.1', outboxSize: 7 });
    expect(beat.status).toBe(200);
    expect(beat.body).toMatchObject({ deviceId, state: 'active' });
    const list = await request(server()).get('/api/admin/devices').set(bearer(admin.accessToken));
    expect(list.body.find((d: { id: string }) => d.id === deviceId)).toMatchObject({
      state: 'active',
      appVersion: '0.3.1',
      outboxSize: 7,
      lastSeenAt: t.clock.now().toISOString(),
    });
  });

  it('answers the sites the tablet may hold, without a site it or its people lost', async () => {
    const second = (await createSite(t)).id;
    const ticket = await register('Two-site tablet', [siteId, second]);
    const enrolled = await enrol(ticket.body.enrolmentCode);
    const device = { deviceId: enrolled.body.deviceId, deviceSecret: enrolled.body.deviceSecret };
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteId, second] });
    const session = await signIn(t, { user: person, device });
    const beat = () =>
      request(server())
        .post('/api/devices/heartbeat')
        .set(bearer(session.accessToken))
        .send({ appVersion: '0.3.1', outboxSize: 0 });
    expect((await beat()).body.holdSiteIds).toEqual([siteId, second].sort());

    // The admin takes the second site off the tablet: the very next answer leaves it out, while
    // the session's own token still names it.
    const changed = await request(server())
      .patch(`/api/admin/devices/${device.deviceId}/sites`)
      .set(bearer(admin.accessToken))
      .send({ siteIds: [siteId] });
    expect(changed.status).toBe(200);
    expect(changed.body).toMatchObject({ id: device.deviceId, siteIds: [siteId] });
    const afterTablet = await beat();
    expect(afterTablet.body.holdSiteIds).toEqual([siteId]);
    expect(afterTablet.body.siteIds).toContain(second);
    const me = await request(server()).get('/api/devices/me').set(bearer(session.accessToken));
    expect(me.body.holdSiteIds).toEqual([siteId]);

    // A person who loses the site: the tablet serves it, but nobody who signed in on it belongs
    // to it any more. A colleague at another site only does not bring it back.
    await request(server())
      .patch(`/api/admin/devices/${device.deviceId}/sites`)
      .set(bearer(admin.accessToken))
      .send({ siteIds: [siteId, second] })
      .expect(200);
    const colleague = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
    const colleagueSession = await signIn(t, { user: colleague, device });
    const change = await request(server())
      .patch(`/api/admin/users/${person.id}`)
      .set(bearer(admin.accessToken))
      .send({ siteIds: [siteId] });
    expect(change.status).toBe(200);
    const byColleague = await request(server())
      .get('/api/devices/me')
      .set(bearer(colleagueSession.accessToken));
    expect(byColleague.body.holdSiteIds).toEqual([siteId]);
    // A deactivated person's memberships keep nothing either.
    for (const id of [person.id, colleague.id]) {
      const off = await request(server())
        .patch(`/api/admin/users/${id}`)
        .set(bearer(admin.accessToken))
        .send({ active: false });
      expect(off.status).toBe(200);
    }
    const third = await createUser(t, { role: 'supervisor', siteIds: [second] });
    const thirdSession = await signIn(t, { user: third, device });
    const byThird = await request(server())
      .get('/api/devices/me')
      .set(bearer(thirdSession.accessToken));
    expect(byThird.body.holdSiteIds).toEqual([second]);
  });

  it('stores how the tablet’s data key is protected and shows it in the Fleet list', async () => {
    const { deviceId, session } = await enrolledTabletSession();
    const row = async () => {
      const list = await request(server()).get('/api/admin/devices').set(bearer(admin.accessToken));
      return list.body.find((d: { id: string }) => d.id === deviceId);
    };
    expect((await row()).keyProtection).toBeNull();
    const beat = (body: object) =>
      request(server())
        .post('/api/devices/heartbeat')
        .set(bearer(session.accessToken))
        .send({ appVersion: '0.4.0', outboxSize: 0, ...body });
    expect((await beat({ keyProtection: 'pin-only' })).status).toBe(200);
    expect((await row()).keyProtection).toBe('pin-only');
    // A tablet of an earlier build sends none: what was reported stays.
    expect((await beat({})).status).toBe(200);
    expect((await row()).keyProtection).toBe('pin-only');
    expect((await beat({ keyProtection: 'passphrase' })).status).toBe(200);
    expect(await row()).toMatchObject({ keyProtection: 'passphrase', appVersion: '0.4.0' });

    const bad = await beat({ keyProtection: 'fingerprint' });
    expect(bad.status).toBe(400);
    expect(bad.body.message).toContain(
      'body.keyProtection: must be one of unprotected, server-only, pin-only, passphrase, hardware',
    );
    expect((await row()).keyProtection).toBe('passphrase');
  });

  it('names the field when a tablet’s new sites are malformed, and refuses a revoked tablet', async () => {
    const { deviceId } = await enrolledTabletSession();
    const change = (siteIds: unknown) =>
      request(server())
        .patch(`/api/admin/devices/${deviceId}/sites`)
        .set(bearer(admin.accessToken))
        .send({ siteIds });
    const empty = await change([]);
    expect(empty.status).toBe(400);
    expect(empty.body.message).toContain('body.siteIds: name at least one site the tablet serves');
    const unknown = await change(['01935a00-0000-7000-8000-00000000dead']);
    expect(unknown.status).toBe(400);
    expect(unknown.body.message).toContain('body.siteIds.0: no site has the id');
    await request(server())
      .post(`/api/admin/devices/${deviceId}/revoke`)
      .set(bearer(admin.accessToken))
      .expect(200);
    const revoked = await change([siteId]);
    expect(revoked.status).toBe(409);
    expect(revoked.body.message).toBe('This tablet is revoked; its sites cannot change.');
  });

  it('names the field of a malformed heartbeat', async () => {
    const { session } = await enrolledTabletSession();
    const res = await request(server())
      .post('/api/devices/heartbeat')
      .set(bearer(session.accessToken))
      .send({ appVersion: '0.3.1', outboxSize: -1 });
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('body.outboxSize');
  });

  it('refuses a revoked tablet on its very next request and tells it to erase', async () => {
    const { deviceId, session, secret } = await enrolledTabletSession();
    expect(
      (await request(server()).get('/api/devices/me').set(bearer(session.accessToken))).status,
    ).toBe(200);
    const revoke = await request(server())
      .post(`/api/admin/devices/${deviceId}/revoke`)
      .set(bearer(admin.accessToken));
    expect(revoke.status).toBe(200);
    expect(revoke.body.state).toBe('revoked');

    const next = await request(server()).get('/api/devices/me').set(bearer(session.accessToken));
    expect(next.status).toBe(401);
    expect(next.body).toMatchObject({ statusCode: 401, erase: true });
    const refresh = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: session.refreshToken });
    expect(refresh.status).toBe(401);
    const person = session.user;
    const login = await request(server()).post('/api/auth/login').send({
      email: person.email,
      password: 'a-test-password-of-decent-length',
      deviceSecret: secret,
    });
    expect(login.status).toBe(401);
    expect(login.body.erase).toBe(true);
    const again = await request(server())
      .post(`/api/admin/devices/${deviceId}/revoke`)
      .set(bearer(admin.accessToken));
    expect(again.status).toBe(409);
  });

  it('lets a retired tablet keep its session to empty its outbox, and tells it it is retired', async () => {
    const { deviceId, session } = await enrolledTabletSession();
    const retire = await request(server())
      .post(`/api/admin/devices/${deviceId}/retire`)
      .set(bearer(admin.accessToken));
    expect(retire.status).toBe(200);
    const me = await request(server()).get('/api/devices/me').set(bearer(session.accessToken));
    expect(me.status).toBe(200);
    expect(me.body.state).toBe('retired');
    const beat = await request(server())
      .post('/api/devices/heartbeat')
      .set(bearer(session.accessToken))
      .send({ appVersion: '0.3.1', outboxSize: 0 });
    expect(beat.body.state).toBe('retired');
    const again = await request(server())
      .post(`/api/admin/devices/${deviceId}/retire`)
      .set(bearer(admin.accessToken));
    expect(again.status).toBe(409);
  });

  it('re-enrols a tablet with a new code: the old secret and its sessions stop working', async () => {
    const { deviceId, session, secret } = await enrolledTabletSession();
    const code = await request(server())
      .post(`/api/admin/devices/${deviceId}/enrolment-code`)
      .set(bearer(admin.accessToken));
    expect(code.status).toBe(201);
    const enrolled = await enrol(code.body.enrolmentCode);
    expect(enrolled.status).toBe(200);
    expect(enrolled.body.deviceSecret).not.toBe(secret);
    expect(
      (await request(server()).get('/api/devices/me').set(bearer(session.accessToken))).status,
    ).toBe(401);
  });

  it('answers 404 for an unknown tablet and 400 for an id that is not a UUID', async () => {
    const missing = await request(server())
      .post('/api/admin/devices/01935a00-0000-7000-8000-00000000beef/revoke')
      .set(bearer(admin.accessToken));
    expect(missing.status).toBe(404);
    const malformed = await request(server())
      .post('/api/admin/devices/42/revoke')
      .set(bearer(admin.accessToken));
    expect(malformed.status).toBe(400);
    expect(malformed.body.message).toContain('params.id');
  });

  it('refuses a desk session on the tablet-only routes', async () => {
    const desk = await signIn(t, {
      user: await createUser(t, { role: 'orthoptist', siteIds: [siteId] }),
    });
    const res = await request(server()).get('/api/devices/me').set(bearer(desk.accessToken));
    expect(res.status).toBe(403);
  });

  it('limits failed enrolments from one address', async () => {
    for (let i = 0; i < ATTEMPT_LIMITS.enrolPerAddress.max; i++) {
      expect((await enrol(`WRONG-CODE-${i}`, '10.9.9.9')).status).toBe(400);
    }
    const ticket = await register();
    const limited = await enrol(ticket.body.enrolmentCode, '10.9.9.9');
    expect(limited.status).toBe(429);
    expect(limited.body.message).toContain('enrolments from this address');
    expect((await enrol(ticket.body.enrolmentCode, '10.9.9.10')).status).toBe(200);
  });

  it('writes enrolments, revocations and retirements to the account audit', async () => {
    const audit = await request(server())
      .get('/api/audit?scope=account&limit=200')
      .set(bearer(admin.accessToken));
    expect(audit.status).toBe(200);
    const kinds = new Set(audit.body.items.map((e: { kind: string }) => e.kind));
    for (const kind of [
      'device.registered',
      'device.enrolled',
      'device.revoked',
      'device.retired',
      'auth.sign_in',
    ]) {
      expect(kinds).toContain(kind);
    }
  });
});
