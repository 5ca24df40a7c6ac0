import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  bearer,
  createDevice,
  createSite,
  createUser,
  signIn,
  type TestUser,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';
import { createApp } from '../app.factory';
import { ATTEMPT_LIMITS } from './attempt-limiter.service';

describe('sign-in, refresh and sign-out', () => {
  let t: TestApp;
  let siteId: string;
  let person: TestUser;
  const server = () => t.app.getHttpServer();

  beforeAll(async () => {
    t = await createTestApp();
    siteId = (await createSite(t)).id;
    person = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
  });
  afterAll(async () => {
    await t.close();
  });

  it('answers a sign-in with tokens and the person, never the password hash', async () => {
    const res = await request(server())
      .post('/api/auth/login')
      .send({ email: person.email, password: person.password });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({
      accessToken: expect.any(String),
      refreshToken: expect.any(String),
      user: {
        id: person.id,
        name: person.name,
        email: person.email,
        role: 'orthoptist',
        siteIds: [siteId],
      },
    });
    expect(JSON.stringify(res.body)).not.toContain('argon2');
  });

  it('accepts the e-mail address in any case', async () => {
    const res = await request(server())
      .post('/api/auth/login')
      .send({ email: person.email.toUpperCase(), password: person.password });
    expect(res.status).toBe(200);
  });

  it('gives the same answer for an unknown e-mail and a wrong password', async () => {
    const unknown = await request(server())
      .post('/api/auth/login')
      .set('X-Forwarded-For', '10.0.0.50')
      .send({ email: 'nobody@test.fuselight.test', password: 'whatever' });
    const wrong = await request(server())
      .post('/api/auth/login')
      .set('X-Forwarded-For', '10.0.0.50')
      .send({ email: person.email, password: 'not-the-password' });
    expect(unknown.status).toBe(401);
    expect(wrong.status).toBe(401);
    expect(unknown.body).toEqual(wrong.body);
  });

  it('names the field that is wrong in a malformed sign-in', async () => {
    const res = await request(server())
      .post('/api/auth/login')
      .send({ email: 'not-an-email', password: '' });
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('body.email');
    expect(res.body.message).toContain('body.password');
  });

  it('rotates the refresh token: the new one works and the old one is spent', async () => {
    const session = await signIn(t, { user: person });
    const first = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: session.refreshToken });
    expect(first.status).toBe(200);
    expect(first.body.refreshToken).not.toBe(session.refreshToken);
    expect(first.body.user.id).toBe(person.id);
    const me = await request(server()).get('/api/me').set(bearer(first.body.accessToken));
    expect(me.status).toBe(200);
    const second = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: first.body.refreshToken });
    expect(second.status).toBe(200);
  });

  it('revokes the whole family when a spent refresh token is presented again', async () => {
    const session = await signIn(t, { user: person });
    const rotated = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: session.refreshToken });
    expect(rotated.status).toBe(200);

    const replay = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: session.refreshToken });
    expect(replay.status).toBe(401);
    expect(replay.body.message).toContain('used twice');

    // The thief's replay also ends the legitimate holder's newer tokens.
    const newest = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: rotated.body.refreshToken });
    expect(newest.status).toBe(401);
    const access = await request(server()).get('/api/me').set(bearer(rotated.body.accessToken));
    expect(access.status).toBe(401);

    const audit = await t
      .em()
      .getConnection()
      .execute(`select kind from audit_event where kind = 'auth.refresh_reuse'`);
    expect(audit.length).toBeGreaterThanOrEqual(1);
  });

  it('refuses an unknown refresh token', async () => {
    const res = await request(server()).post('/api/auth/refresh').send({ refreshToken: 'made-up' });
    expect(res.status).toBe(401);
  });

  it('ends the session on sign-out: its access and refresh tokens stop working', async () => {
    const session = await signIn(t, { user: person });
    const out = await request(server()).post('/api/auth/logout').set(bearer(session.accessToken));
    expect(out.status).toBe(204);
    expect((await request(server()).get('/api/me').set(bearer(session.accessToken))).status).toBe(
      401,
    );
    const refresh = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: session.refreshToken });
    expect(refresh.status).toBe(401);
  });

  it('refuses an access token once the clock passes its lifetime, and a refresh still works', async () => {
    const session = await signIn(t, { user: person });
    expect((await request(server()).get('/api/me').set(bearer(session.accessToken))).status).toBe(
      200,
    );
    t.clock.advance((t.config.accessTokenTtlSeconds + 1) * 1000);
    const expired = await request(server()).get('/api/me').set(bearer(session.accessToken));
    expect(expired.status).toBe(401);
    expect(expired.body.message).toContain('expired');
    const refreshed = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: session.refreshToken });
    expect(refreshed.status).toBe(200);
    expect(
      (await request(server()).get('/api/me').set(bearer(refreshed.body.accessToken))).status,
    ).toBe(200);
  });

  it('refuses a refresh after the session family’s lifetime', async () => {
    const session = await signIn(t, { user: person });
    t.clock.advance((t.config.refreshTokenTtlDays * 86_400 + 60) * 1000);
    const res = await request(server())
      .post('/api/auth/refresh')
      .send({ refreshToken: session.refreshToken });
    expect(res.status).toBe(401);
    expect(res.body.message).toContain('expired');
  });

  it('refuses a deactivated person at once, and at sign-in with the usual message', async () => {
    const admin = await createUser(t, { role: 'admin', siteIds: [] });
    const adminSession = await signIn(t, { user: admin });
    const leaver = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
    const session = await signIn(t, { user: leaver });
    const patch = await request(server())
      .patch(`/api/admin/users/${leaver.id}`)
      .set(bearer(adminSession.accessToken))
      .send({ active: false });
    expect(patch.status).toBe(200);
    expect((await request(server()).get('/api/me').set(bearer(session.accessToken))).status).toBe(
      401,
    );
    const again = await request(server())
      .post('/api/auth/login')
      .send({ email: leaver.email, password: leaver.password });
    expect(again.status).toBe(401);
    expect(again.body.message).toBe(
      'That e-mail address and password do not match an active account.',
    );
  });

  describe('on a tablet', () => {
    it('binds the session to the tablet and keeps only the sites both serve', async () => {
      const other = await createSite(t);
      const both = await createUser(t, { role: 'supervisor', siteIds: [siteId, other.id] });
      const device = await createDevice(t, { siteIds: [other.id] });
      const session = await signIn(t, { user: both, device });
      expect(session.user.siteIds).toEqual([other.id]);
      const me = await request(server()).get('/api/me').set(bearer(session.accessToken));
      expect(me.body).toMatchObject({ deviceId: device.deviceId, siteIds: [other.id] });
      const refreshed = await request(server())
        .post('/api/auth/refresh')
        .send({ refreshToken: session.refreshToken });
      expect(refreshed.body.user.siteIds).toEqual([other.id]);
    });

    it('refuses a tablet that serves none of the person’s sites', async () => {
      const elsewhere = await createSite(t);
      const device = await createDevice(t, { siteIds: [elsewhere.id] });
      const res = await request(server()).post('/api/auth/login').send({
        email: person.email,
        password: person.password,
        deviceSecret: device.deviceSecret,
      });
      expect(res.status).toBe(403);
      expect(res.body.message).toContain('serves none of your sites');
    });

    it('refuses an unknown device secret', async () => {
      const res = await request(server()).post('/api/auth/login').send({
        email: person.email,
        password: person.password,
        deviceSecret: 'not-a-real-secret',
      });
      expect(res.status).toBe(401);
      expect(res.body.message).toContain('deviceSecret');
    });
  });
});

describe('limits on failed sign-ins (counted in PostgreSQL)', () => {
  let t: TestApp;
  let siteId: string;
  const server = () => t.app.getHttpServer();
  const attempt = (email: string, password: string, address: string) =>
    request(server())
      .post('/api/auth/login')
      .set('X-Forwarded-For', address)
      .send({ email, password });

  beforeAll(async () => {
    t = await createTestApp();
    siteId = (await createSite(t)).id;
  });
  afterAll(async () => {
    await t.close();
  });

  it('answers 429 once an account has used its failed attempts, even with the right password', async () => {
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
    for (let i = 0; i < ATTEMPT_LIMITS.signInPerAccount.max; i++) {
      // From different addresses: the account limit alone must stop this.
      expect((await attempt(person.email, 'wrong', `10.1.0.${i}`)).status).toBe(401);
    }
    const limited = await attempt(person.email, person.password, '10.1.1.1');
    expect(limited.status).toBe(429);
    expect(limited.body.message).toMatch(
      /Too many failed sign-ins for this account; try again in \d+ minutes?/,
    );
  });

  it('lets the account in again when the window has passed, and a success clears the count', async () => {
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
    for (let i = 0; i < ATTEMPT_LIMITS.signInPerAccount.max; i++)
      await attempt(person.email, 'wrong', '10.2.0.1');
    expect((await attempt(person.email, person.password, '10.2.0.2')).status).toBe(429);
    t.clock.advance(ATTEMPT_LIMITS.signInPerAccount.windowSeconds * 1000 + 1000);
    expect((await attempt(person.email, person.password, '10.2.0.2')).status).toBe(200);
    for (let i = 0; i < ATTEMPT_LIMITS.signInPerAccount.max - 1; i++)
      await attempt(person.email, 'wrong', '10.2.0.3');
    expect((await attempt(person.email, person.password, '10.2.0.4')).status).toBe(200);
    expect((await attempt(person.email, 'wrong', '10.2.0.5')).status).toBe(401);
  });

  it('limits one client address guessing across many accounts', async () => {
    const address = '10.3.0.1';
    for (let i = 0; i < ATTEMPT_LIMITS.signInPerAddress.max; i++) {
      expect((await attempt(`guess${i}@test.fuselight.test`, 'wrong', address)).status).toBe(401);
    }
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
    const limited = await attempt(person.email, person.password, address);
    expect(limited.status).toBe(429);
    expect(limited.body.message).toContain('from this address');
    expect((await attempt(person.email, person.password, '10.3.0.2')).status).toBe(200);
  });

  it('shares its counts between server instances on one database, as behind a load balancer', async () => {
    const second = await createApp(t.config, { clock: t.clock, logger: false });
    await second.init();
    try {
      const person = await createUser(t, { role: 'orthoptist', siteIds: [siteId] });
      const half = Math.ceil(ATTEMPT_LIMITS.signInPerAccount.max / 2);
      for (let i = 0; i < half; i++) await attempt(person.email, 'wrong', '10.4.0.1');
      for (let i = half; i < ATTEMPT_LIMITS.signInPerAccount.max; i++) {
        const res = await request(second.getHttpServer())
          .post('/api/auth/login')
          .set('X-Forwarded-For', '10.4.0.2')
          .send({ email: person.email, password: 'wrong' });
        expect(res.status).toBe(401);
      }
      expect((await attempt(person.email, person.password, '10.4.0.3')).status).toBe(429);
    } finally {
      await second.close();
    }
  });
});
