import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildOpenApiDocument } from '../app.factory';
import { createTestApp, type TestApp } from '../testing/test-app';
import { stableJson } from './stable-json';

// The OpenAPI document is a generated artefact, committed and reviewed as code. Regenerate it
// with:  npm run build -w sync-server && (cd sync-server && node dist/cli.cjs openapi)
describe('the committed OpenAPI document', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp();
  });
  afterAll(async () => {
    await t.close();
  });

  it('matches the routes the server actually has', () => {
    const committed = readFileSync(join(import.meta.dirname, '..', '..', 'openapi.json'), 'utf8');
    const current = `${stableJson(buildOpenApiDocument(t.app))}\n`;
    expect(JSON.parse(current).paths).toEqual(JSON.parse(committed).paths);
  });

  it('documents every route under /api with bearer authentication declared', () => {
    const doc = buildOpenApiDocument(t.app);
    const paths = Object.keys(doc.paths);
    expect(paths.length).toBeGreaterThan(0);
    expect(paths.every((p) => p.startsWith('/api/'))).toBe(true);
    expect(doc.components?.securitySchemes?.bearer).toBeDefined();
  });
});
