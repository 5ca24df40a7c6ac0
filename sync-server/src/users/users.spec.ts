import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import {
  bearer,
  createDevice,
  createSite,
  createUser,
  signIn,
  type TestSession,
  type TestUser,
} from '../testing/identity-factory';
import { createTestApp, type TestApp } from '../testing/test-app';

describe('people and sites at the admin desk', () => {
  let t: TestApp;
  let siteA: string;
  let siteB: string;
  let adminUser: TestUser;
  let admin: TestSession;
  const server = () => t.app.getHttpServer();

  beforeAll(async () => {
    t = await createTestApp();
    siteA = (await createSite(t)).id;
    siteB = (await createSite(t, { kind: 'outreach' })).id;
    adminUser = await createUser(t, { role: 'admin', siteIds: [] });
  });
  beforeEach(async () => {
    admin = await signIn(t, { user: adminUser });
  });
  afterAll(async () => {
    await t.close();
  });

  it('invites a person whose one-time password signs in once and must then be changed', async () => {
    const invite = await request(server())
      .post('/api/admin/users')
      .set(bearer(admin.accessToken))
      .send({
        name: 'Wren Halloway',
        email: 'Wren.Halloway@test.fuselight.test',
        role: 'orthoptist',
        siteIds: [siteA],
        needsCountersign: true,
      });
    expect(invite.status).toBe(201);
    expect(invite.body.user).toMatchObject({
      name: 'Wren Halloway',
      email: 'wren.halloway@test.fuselight.test',
      role: 'orthoptist',
      siteIds: [siteA],
      needsCountersign: true,
      mustChangePassword: true,
      active: true,
    });
    const login = await request(server())
      .post('/api/auth/login')
      .send({ email: 'wren.halloway@test.fuselight.test', password: invite.body.initialPassword });
    expect(login.status).toBe(200);
    const auth = bearer(login.body.accessToken);
    expect((await request(server()).get('/api/me').set(auth)).body.mustChangePassword).toBe(true);

    const tooShort = await request(server())
      .post('/api/me/password')
      .set(auth)
      .send({ currentPassword: invite.body.initialPassword, newPassword: 'short' });
    expect(tooShort.status).toBe(400);
    expect(tooShort.body.message).toContain('body.newPassword');

    const changed = await request(server()).post('/api/me/password').set(auth).send({
      currentPassword: invite.body.initialPassword,
      newPassword: 'wren-chooses-her-own-password',
    });
    expect(changed.status).toBe(204);
    expect((await request(server()).get('/api/me').set(auth)).body.mustChangePassword).toBe(false);
    const old = await request(server())
      .post('/api/auth/login')
      .send({ email: 'wren.halloway@test.fuselight.test', password: invite.body.initialPassword });
    expect(old.status).toBe(401);
  });

  it('refuses a second person with the same e-mail, whatever its case', async () => {
    const first = await createUser(t, { role: 'orthoptist', siteIds: [siteA] });
    const res = await request(server())
      .post('/api/admin/users')
      .set(bearer(admin.accessToken))
      .send({
        name: 'Copy',
        email: first.email.toUpperCase(),
        role: 'orthoptist',
        siteIds: [siteA],
      });
    expect(res.status).toBe(409);
    expect(res.body.message).toContain('body.email');
  });

  it('names the wrong field of an invitation', async () => {
    const res = await request(server())
      .post('/api/admin/users')
      .set(bearer(admin.accessToken))
      .send({ name: 'X', email: 'x@test.fuselight.test', role: 'surgeon', siteIds: [siteA] });
    expect(res.status).toBe(400);
    expect(res.body.message).toContain(
      'body.role: role must be one of: orthoptist, outreach, supervisor, admin',
    );
  });

  it('changes a role and sites, ends the person’s sessions, and audits both changes', async () => {
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteA] });
    const session = await signIn(t, { user: person });
    const res = await request(server())
      .patch(`/api/admin/users/${person.id}`)
      .set(bearer(admin.accessToken))
      .send({ role: 'supervisor', siteIds: [siteA, siteB] });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ role: 'supervisor', siteIds: [siteA, siteB].sort() });
    expect((await request(server()).get('/api/me').set(bearer(session.accessToken))).status).toBe(
      401,
    );
    const again = await signIn(t, { user: person });
    expect(again.user).toMatchObject({ role: 'supervisor', siteIds: [siteA, siteB].sort() });

    const audit = await request(server())
      .get('/api/audit?scope=account')
      .set(bearer(admin.accessToken));
    const mine = audit.body.items.filter((e: { subjectId: string }) => e.subjectId === person.id);
    expect(mine.map((e: { kind: string }) => e.kind)).toEqual(
      expect.arrayContaining(['user.role_changed', 'user.sites_changed']),
    );
    const roleChange = mine.find((e: { kind: string }) => e.kind === 'user.role_changed');
    expect(roleChange).toMatchObject({
      actorId: adminUser.id,
      detail: { role: { from: 'orthoptist', to: 'supervisor' } },
    });
  });

  it('keeps a person’s sessions when only the countersigning setting changes', async () => {
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteA] });
    const session = await signIn(t, { user: person });
    const res = await request(server())
      .patch(`/api/admin/users/${person.id}`)
      .set(bearer(admin.accessToken))
      .send({ needsCountersign: true });
    expect(res.body.needsCountersign).toBe(true);
    const me = await request(server()).get('/api/me').set(bearer(session.accessToken));
    expect(me.status).toBe(200);
    expect(me.body.needsCountersign).toBe(true);
  });

  it('refuses to remove the last active admin', async () => {
    const res = await request(server())
      .patch(`/api/admin/users/${adminUser.id}`)
      .set(bearer(admin.accessToken))
      .send({ role: 'supervisor' });
    expect(res.status).toBe(409);
    expect(res.body.message).toContain('active admin');
    const after = await request(server()).get('/api/me').set(bearer(admin.accessToken));
    expect(after.body.role).toBe('admin');
  });

  it('refuses an empty change and an unknown field', async () => {
    const person = await createUser(t, { role: 'orthoptist', siteIds: [siteA] });
    const empty = await request(server())
      .patch(`/api/admin/users/${person.id}`)
      .set(bearer(admin.accessToken))
      .send({});
    expect(empty.status).toBe(400);
    expect(empty.body.message).toContain('send at least one of');
    const unknown = await request(server())
      .patch(`/api/admin/users/${person.id}`)
      .set(bearer(admin.accessToken))
      .send({ passwordHash: 'x' });
    expect(unknown.status).toBe(400);
    expect(unknown.body.message).toContain('passwordHash');
  });

  it('lists people with their sites and without any credential', async () => {
    const res = await request(server()).get('/api/admin/users').set(bearer(admin.accessToken));
    expect(res.status).toBe(200);
    expect(res.body.length).toBeGreaterThan(1);
    for (const person of res.body) {
      expect(Object.keys(person).sort()).toEqual(
        [
          'active',
          'createdAt',
          'email',
          'id',
          'lastSignInAt',
          'mustChangePassword',
          'name',
          'needsCountersign',
          'role',
          'siteIds',
        ].sort(),
      );
    }
  });

  it('creates, lists and edits sites, refusing a time zone that does not exist', async () => {
    const created = await request(server())
      .post('/api/admin/sites')
      .set(bearer(admin.accessToken))
      .send({ name: 'Saltmarsh Primary', kind: 'outreach', address: '2 Dyke Road' });
    expect(created.status).toBe(201);
    expect(created.body).toMatchObject({
      name: 'Saltmarsh Primary',
      kind: 'outreach',
      timeZone: 'Europe/London',
    });
    const patched = await request(server())
      .patch(`/api/admin/sites/${created.body.id}`)
      .set(bearer(admin.accessToken))
      .send({ timeZone: 'Europe/Dublin' });
    expect(patched.body.timeZone).toBe('Europe/Dublin');
    const wrong = await request(server())
      .patch(`/api/admin/sites/${created.body.id}`)
      .set(bearer(admin.accessToken))
      .send({ timeZone: 'Mars/Olympus' });
    expect(wrong.status).toBe(400);
    expect(wrong.body.message).toContain('body.timeZone');
    const list = await request(server()).get('/api/admin/sites').set(bearer(admin.accessToken));
    expect(list.body.map((s: { id: string }) => s.id)).toContain(created.body.id);
  });
});

describe('GET /api/me/sites', () => {
  let t: TestApp;
  const server = () => t.app.getHttpServer();

  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it('names every site the person belongs to, by name, and none of anyone else’s', async () => {
    const north = await createSite(t, {
      name: 'Northgate Eye Clinic',
      timeZone: 'Europe/Dublin',
      address: '4 Quarry Lane, Northgate, NG1 7TQ',
    });
    const school = await createSite(t, { name: 'Ashby Primary (outreach)', kind: 'outreach' });
    const elsewhere = await createSite(t, { name: 'Someone else’s clinic' });
    const person = await createUser(t, { role: 'orthoptist', siteIds: [north.id, school.id] });
    await createUser(t, { role: 'orthoptist', siteIds: [elsewhere.id] });
    // On a tablet that serves only one of them, the person still sees both names.
    const tablet = await createDevice(t, { siteIds: [north.id] });
    const session = await signIn(t, { user: person, device: tablet });
    expect(session.user.siteIds).toEqual([north.id]);

    const res = await request(server()).get('/api/me/sites').set(bearer(session.accessToken));
    expect(res.status).toBe(200);
    expect(res.body).toEqual([
      {
        id: school.id,
        name: 'Ashby Primary (outreach)',
        kind: 'outreach',
        timeZone: 'Europe/London',
        address: null,
      },
      {
        id: north.id,
        name: 'Northgate Eye Clinic',
        kind: 'clinic',
        timeZone: 'Europe/Dublin',
        address: '4 Quarry Lane, Northgate, NG1 7TQ',
      },
    ]);
  });

  it('gives an admin their own sites, an admin with none an empty list, and 401 without a token', async () => {
    const site = await createSite(t, { name: 'Admin’s clinic' });
    const withSite = await createUser(t, { role: 'admin', siteIds: [site.id] });
    const withNone = await createUser(t, { role: 'admin', siteIds: [] });
    const a = await signIn(t, { user: withSite });
    const b = await signIn(t, { user: withNone });
    expect((await request(server()).get('/api/me/sites').set(bearer(a.accessToken))).body).toEqual([
      {
        id: site.id,
        name: 'Admin’s clinic',
        kind: 'clinic',
        timeZone: 'Europe/London',
        address: null,
      },
    ]);
    expect((await request(server()).get('/api/me/sites').set(bearer(b.accessToken))).body).toEqual(
      [],
    );
    expect((await request(server()).get('/api/me/sites')).status).toBe(401);
  });
});

describe('GET /api/me/colleagues', () => {
  let t: TestApp;
  const server = () => t.app.getHttpServer();

  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it('names everyone who shares one of the person’s sites, once, by name, and no one else', async () => {
    const north = await createSite(t, { name: 'Calder Vale clinic' });
    const school = await createSite(t, { name: 'Rook Hill school (outreach)', kind: 'outreach' });
    const elsewhere = await createSite(t, { name: 'Far clinic' });
    const me = await createUser(t, {
      role: 'orthoptist',
      name: 'Tamsin Breck',
      siteIds: [north.id, school.id],
    });
    const both = await createUser(t, {
      role: 'supervisor',
      name: 'Ansel Moray',
      siteIds: [north.id, school.id],
    });
    const outreachOnly = await createUser(t, {
      role: 'orthoptist',
      name: 'Briony Vale',
      siteIds: [school.id],
    });
    await createUser(t, { role: 'orthoptist', name: 'Corin Stray', siteIds: [elsewhere.id] });
    const session = await signIn(t, { user: me });

    const res = await request(server()).get('/api/me/colleagues').set(bearer(session.accessToken));
    expect(res.status).toBe(200);
    expect(res.body).toEqual([
      { id: both.id, name: 'Ansel Moray', role: 'supervisor' },
      { id: outreachOnly.id, name: 'Briony Vale', role: 'orthoptist' },
      { id: me.id, name: 'Tamsin Breck', role: 'orthoptist' },
    ]);
    expect(JSON.stringify(res.body)).not.toContain('@');
  });

  it('gives a person with no site an empty list, and 401 without a token', async () => {
    const alone = await createUser(t, { role: 'admin', siteIds: [] });
    const session = await signIn(t, { user: alone });
    const res = await request(server()).get('/api/me/colleagues').set(bearer(session.accessToken));
    expect(res.body).toEqual([]);
    expect((await request(server()).get('/api/me/colleagues')).status).toBe(401);
  });
});
