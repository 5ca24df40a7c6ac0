import { randomUUID } from 'node:crypto';
import request from 'supertest';
import { PROTOCOL_VERSION, SCHEMA_VERSION, createClock, tick } from '@fuselight/shared';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, type TestApp } from '../testing/test-app';
import { startVersionsBelowPowerOfTen, versionLengths } from '../testing/version-boundary';
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
    // The clinic in use: a later change has one digit more than the demo's versions.
    await startVersionsBelowPowerOfTen(t.db.url, { transactionsBefore: 0 });
    const later = await request(server)
      .post('/api/sync/push')
      .set('Authorization', `Bearer ${token}`)
      .send({
        protocol: PROTOCOL_VERSION,
        schemaVersion: SCHEMA_VERSION,
        changes: [
          {
            changeId: randomUUID(),
            collection: 'patient',
            recordId: randomUUID(),
            baseVersion: 0,
            hlc: tick(createClock(enrol.body.deviceId as string), t.clock.now().getTime()).stamp,
            fields: {
              siteId: DEMO_SITES.main.id,
              givenName: 'Registered',
              familyName: 'Later',
              dateOfBirth: '2019-02-03',
              clinicNumber: 'FL-LATER-1',
            },
          },
        ],
      });
    expect(later.status).toBe(200);
    expect(later.body.results[0].status).toBe('applied');
    const pulled: {
      collection: string;
      id: string;
      version: number;
      fields: Record<string, unknown>;
    }[] = [];
    let after = 0;
    for (;;) {
      const page = await request(server)
        .get(`/api/sync/pull?after=${after}&limit=50`)
        .set('Authorization', `Bearer ${token}`);
      expect(page.status).toBe(200);
      pulled.push(...page.body.records);
      if (!page.body.more) break;
      after = page.body.cursor;
    }
    // Every record of the site, each once, in ascending numeric order, across the boundary.
    const stored = await t
      .em()
      .getConnection()
      .execute<{ id: string; v: string }[]>(
        `select r."id", r."version"::text as "v" from "sync_record" r where r."site_id" = ? order by r."version"`,
        [DEMO_SITES.main.id],
      );
    expect(versionLengths(stored.map((r) => Number(r.v))).length).toBe(2);
    expect(pulled.map((r) => [r.id, r.version])).toEqual(stored.map((r) => [r.id, Number(r.v)]));
    expect(pulled.filter((r) => r.collection === 'visit').length).toBeGreaterThan(10);
    const ids = new Set(pulled.map((r) => r.id));
    expect(ids.has(DEMO_STORY_PATIENTS.changingDeviation)).toBe(true);
    expect(ids.has(DEMO_STORY_PATIENTS.harmoniousArc)).toBe(true);
    expect(pulled.every((r) => r.fields.siteId === DEMO_SITES.main.id)).toBe(true);
    expect(pulled.filter((r) => r.collection === 'amblyoscopeAngles').length).toBeGreaterThan(5);
  });
});
