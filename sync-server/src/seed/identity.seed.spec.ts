import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeedService } from './seed.service';
import { DEMO_PASSWORD, DEMO_PEOPLE, DEMO_SITES } from './demo-scenario';
import { createTestApp, type TestApp } from '../testing/test-app';

describe('the demo seed of people and the demo tablet', () => {
  let t: TestApp;
  let firstRun: string[];
  beforeAll(async () => {
    t = await createTestApp();
    firstRun = await t.app.get(SeedService).run();
  });
  afterAll(async () => {
    await t.close();
  });

  it('prints every demo sign-in and an enrolment code', () => {
    const printed = firstRun.join('\n');
    for (const person of Object.values(DEMO_PEOPLE)) expect(printed).toContain(person.email);
    expect(printed).toMatch(/enrolment code: [0-9A-Z]{4}-[0-9A-Z]{4}-[0-9A-Z]{4}/);
  });

  it('can run again without changing the people, and prints a fresh code', async () => {
    const again = await t.app.get(SeedService).run();
    const code = (lines: string[]) => /code: (\S+)/.exec(lines.join('\n'))?.[1];
    expect(code(again)).toBeDefined();
    expect(code(again)).not.toBe(code(firstRun));
    const count = await t.em().getConnection().execute('select count(*)::int as n from app_user');
    expect(count[0]?.n).toBe(Object.keys(DEMO_PEOPLE).length);
  });

  it('lets the outreach clinician sign in on the demo tablet and hold only the outreach site', async () => {
    const printed = (await t.app.get(SeedService).run()).join('\n');
    const enrolmentCode = /code: (\S+)/.exec(printed)?.[1];
    const server = t.app.getHttpServer();
    const enrol = await request(server).post('/api/devices/enrol').send({ code: enrolmentCode });
    expect(enrol.status).toBe(200);
    const login = await request(server).post('/api/auth/login').send({
      email: DEMO_PEOPLE.outreach.email,
      password: DEMO_PASSWORD,
      deviceSecret: enrol.body.deviceSecret,
    });
    expect(login.status).toBe(200);
    expect(login.body.user.siteIds).toEqual([DEMO_SITES.outreach.id]);
  });

  it('marks the student as needing a countersignature', async () => {
    const server = t.app.getHttpServer();
    const login = await request(server)
      .post('/api/auth/login')
      .send({ email: DEMO_PEOPLE.student.email, password: DEMO_PASSWORD });
    const me = await request(server)
      .get('/api/me')
      .set('Authorization', `Bearer ${login.body.accessToken}`);
    expect(me.body).toMatchObject({
      role: 'orthoptist',
      needsCountersign: true,
      siteIds: [DEMO_SITES.main.id],
    });
  });
});
