// How the server delivers the app and its answers: compressed where it pays (brotli when the
// browser takes it, else gzip), hashed assets cacheable for a year, the shell always revalidated.
import { mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { brotliDecompressSync, gunzipSync } from 'node:zlib';
import { get as httpGet, type IncomingHttpHeaders } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { TestApp } from './testing/test-app';
import {
  SITE_A,
  createSyncTestApp,
  newId,
  patientFields,
  tabletFor,
} from './sync/testing/sync-test-kit';

let t: TestApp;
let dist: string;
const script = `export const rows = [${Array.from({ length: 600 }, (_, i) => `{"n":${i},"label":"row ${i}"}`).join(',')}];\n`;
const shell = `<!doctype html><html><head><title>Fuselight</title>${'<meta name="x" content="padding">'.repeat(60)}</head><body><div id="root"></div><script type="module" src="/assets/index-Ab12Cd34.js"></script></body></html>`;

beforeAll(async () => {
  dist = mkdtempSync(join(tmpdir(), 'fuselight-dist-'));
  mkdirSync(join(dist, 'assets'));
  writeFileSync(join(dist, 'index.html'), shell);
  writeFileSync(join(dist, 'sw.js'), `self.addEventListener('fetch', () => {});\n`);
  writeFileSync(join(dist, 'assets', 'index-Ab12Cd34.js'), script);
  writeFileSync(join(dist, 'assets', 'tiny-Zz99Yy88.js'), 'export const a = 1;\n');
  // A hashed asset whose hash happens to end in "sw" (as useStorageWarnings-DY6da3sw.js did).
  writeFileSync(join(dist, 'assets', 'warnings-DY6da3sw.js'), script);
  t = await createSyncTestApp({ env: { PWA_DIST: dist } });
  await t.app.listen(0, '127.0.0.1');
});

afterAll(async () => {
  await t.close();
  rmSync(dist, { recursive: true, force: true });
});

interface RawAnswer {
  status: number;
  headers: IncomingHttpHeaders;
  body: Buffer;
}

/** The bytes of an answer as they travel (a test client would decode them). */
async function raw(
  path: string,
  acceptEncoding: string,
  extra: Record<string, string> = {},
): Promise<RawAnswer> {
  const address = t.app.getHttpServer().address() as AddressInfo;
  return new Promise((resolve, reject) => {
    const req = httpGet(
      {
        host: '127.0.0.1',
        port: address.port,
        path,
        headers: { 'Accept-Encoding': acceptEncoding, ...extra },
      },
      (res) => {
        const chunks: Buffer[] = [];
        res.on('data', (chunk: Buffer) => chunks.push(chunk));
        res.on('end', () =>
          resolve({
            status: res.statusCode ?? 0,
            headers: res.headers,
            body: Buffer.concat(chunks),
          }),
        );
        res.on('error', reject);
      },
    );
    req.on('error', reject);
  });
}

describe('delivery of the app', () => {
  it('sends a hashed asset brotli-compressed to a browser that takes it, cacheable for a year', async () => {
    const res = await raw('/assets/index-Ab12Cd34.js', 'gzip, deflate, br');
    expect(res.status).toBe(200);
    expect(res.headers['content-encoding']).toBe('br');
    expect(res.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    expect(res.headers['vary']).toMatch(/Accept-Encoding/i);
    const body = res.body;
    expect(body.length).toBeLessThan(script.length / 4);
    expect(brotliDecompressSync(body).toString()).toBe(script);
  });

  it('keeps a hashed asset cacheable when its name happens to end in sw.js, and the service worker revalidated', async () => {
    const asset = await raw('/assets/warnings-DY6da3sw.js', 'br');
    expect(asset.status).toBe(200);
    expect(asset.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    const worker = await raw('/sw.js', 'br');
    expect(worker.headers['cache-control']).toBe('no-cache');
  });

  it('sends gzip to a browser without brotli, and the file as it is to one that takes neither', async () => {
    const gz = await raw('/assets/index-Ab12Cd34.js', 'gzip');
    expect(gz.status).toBe(200);
    expect(gz.headers['content-encoding']).toBe('gzip');
    expect(gunzipSync(gz.body).toString()).toBe(script);
    const plain = await raw('/assets/index-Ab12Cd34.js', 'identity');
    expect(plain.status).toBe(200);
    expect(plain.headers['content-encoding']).toBeUndefined();
    expect(plain.body.toString()).toBe(script);
  });

  it('leaves answers under a kilobyte uncompressed', async () => {
    const res = await raw('/assets/tiny-Zz99Yy88.js', 'br, gzip');
    expect(res.status).toBe(200);
    expect(res.headers['content-encoding']).toBeUndefined();
  });

  it('sends the app shell compressed and always revalidated, also for a deep link', async () => {
    for (const path of ['/', '/patients/123/visits']) {
      const res = await raw(path, 'br, gzip', { Accept: 'text/html' });
      expect(res.status, path).toBe(200);
      expect(res.headers['content-encoding'], path).toBe('br');
      expect(res.headers['cache-control'], path).toBe('no-cache');
      expect(brotliDecompressSync(res.body).toString(), path).toBe(shell);
    }
    const sw = await raw('/sw.js', 'gzip');
    expect(sw.status).toBe(200);
    expect(sw.headers['cache-control']).toBe('no-cache');
  });

  it('compresses a page of pulled records', async () => {
    const tablet = await tabletFor(t, 'orthoptist', [SITE_A]);
    await tablet.pushOk(
      Array.from({ length: 40 }, () =>
        tablet.change({ recordId: newId(), fields: patientFields(SITE_A) }),
      ),
    );
    const res = await raw('/api/sync/pull?after=0&limit=100', 'gzip', {
      Authorization: `Bearer ${tablet.caller.token}`,
    });
    expect(res.status).toBe(200);
    expect(res.headers['content-encoding']).toBe('gzip');
    const json = JSON.parse(gunzipSync(res.body).toString()) as { records: unknown[] };
    expect(json.records).toHaveLength(40);
    expect(res.body.length).toBeLessThan(JSON.stringify(json).length / 3);
  });
});
