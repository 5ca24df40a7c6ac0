import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../testing/test-app';
import { DEMO_PATIENT_COUNT, DEMO_STORY_PATIENTS } from './clinical-demo.data';
import { DEMO_PASSWORD, DEMO_PEOPLE, DEMO_SITES } from './demo-scenario';
import { SeedService } from './seed.service';

describe('the clinical demo seed', () => {
  let t: TestApp;
  let firstRun: string[];
  beforeAll(async () => {
    t = await createTestApp();
    firstRun = await t.app.get(SeedService).run();
  });
  afterAll(async () => {
    await t.close();
  });

  it('writes the scenario through the sync storage and says how much it wrote', () => {
    expect(firstRun.join('\n')).toMatch(
      new RegExp(
        `Clinical demo: ${DEMO_PATIENT_COUNT} patients, \\d+ records \\(\\d+ new, 0 already there\\)`,
      ),
    );
  });

  it('changes nothing when it runs again', async () => {
    const again = (await t.app.get(SeedService).run()).join('\n');
    expect(again).toMatch(/Clinical demo: \d+ patients, \d+ records \(0 new, \d+ already there\)/);
  });

  it('lets a tablet at the main site pull the story patients on its first sync', async () => {
    const printed = (await t.app.get(SeedService).run()).join('\n');
    const enrolmentCode = /code: (\S+)/.exec(printed)?.[1];
    const server = t.app.getHttpServer();
    const enrol = await request(server).post('/api/devices/enrol').send({ code: enrolmentCode });
    const login = await request(server).post('/api/auth/login').send({
      email: DEMO_PEOPLE.orthoptist.email,
      password: DEMO_PASSWORD,
      deviceSecret: enrol.body.deviceSecret,
    });
    expect(login.status).toBe(200);
    const token = login.body.accessToken as string;
    const pulled: { collection: string; id: string; fields: Record<string, unknown> }[] = [];
    let after = 0;
    for (;;) {
      const page = await request(server)
        .get(`/api/sync/pull?after=${after}&limit=1000`)
        .set('Authorization', `Bearer ${token}`);
      expect(page.status).toBe(200);
      pulled.push(...page.body.records);
      if (!page.body.more) break;
      after = page.body.cursor;
    }
    const ids = new Set(pulled.map((r) => r.id));
    expect(ids.has(DEMO_STORY_PATIENTS.changingDeviation)).toBe(true);
    expect(ids.has(DEMO_STORY_PATIENTS.harmoniousArc)).toBe(true);
    expect(pulled.every((r) => r.fields.siteId === DEMO_SITES.main.id)).toBe(true);
    expect(pulled.filter((r) => r.collection === 'amblyoscopeAngles').length).toBeGreaterThan(5);
  });
});
