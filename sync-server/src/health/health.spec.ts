import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SCHEMA_VERSION } from '@fuselight/shared';
import { createTestApp, type TestApp } from '../testing/test-app';

describe('GET /api/health', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it('answers ok with the database checked and the shared schema version', async () => {
    const res = await request(t.app.getHttpServer()).get('/api/health').expect(200);
    expect(res.body).toEqual({
      status: 'ok',
      db: 'ok',
      version: expect.stringMatching(/^\d+\.\d+\.\d+/),
      schemaVersion: SCHEMA_VERSION,
    });
  });

  it('sends security headers from helmet', async () => {
    const res = await request(t.app.getHttpServer()).get('/api/health');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['content-security-policy']).toContain("default-src 'self'");
  });

  it('answers malformed JSON with a 400 that says the body is not JSON', async () => {
    const res = await request(t.app.getHttpServer())
      .post('/api/health')
      .set('content-type', 'application/json')
      .send('{"not json');
    expect(res.status).toBe(400);
    expect(res.body.message).toContain('not valid JSON');
  });
});
