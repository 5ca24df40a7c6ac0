import type { BrowserContext } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { baseUrl, launchTablet, screenshot } from './support/browser';

describe('the installed app shell', () => {
  let context: BrowserContext;
  beforeAll(async () => {
    context = await launchTablet();
  });
  afterAll(async () => {
    await context.close();
  });

  it('serves a web manifest with install icons, including maskable ones', async () => {
    const page = await context.newPage();
    const res = await page.goto(`${baseUrl()}/manifest.webmanifest`);
    const manifest = (await res!.json()) as {
      short_name: string;
      icons: { sizes: string; purpose: string }[];
    };
    expect(manifest.short_name).toBe('Fuselight');
    expect(manifest.icons.map((i) => `${i.sizes}:${i.purpose}`)).toEqual(
      expect.arrayContaining(['192x192:any', '512x512:any', '512x512:maskable']),
    );
    await page.close();
  });

  it('loads its hashed scripts and styles compressed and cacheable for a year', async () => {
    const page = await context.newPage();
    const assets: Array<{
      url: string;
      encoding: string | undefined;
      cache: string | undefined;
      length: number | null;
    }> = [];
    page.on('response', (res) => {
      if (!/\/assets\/[^/]+\.(js|css)$/.test(new URL(res.url()).pathname)) return;
      if (res.fromServiceWorker()) return;
      const headers = res.headers();
      assets.push({
        url: res.url(),
        encoding: headers['content-encoding'],
        cache: headers['cache-control'],
        length: headers['content-length'] === undefined ? null : Number(headers['content-length']),
      });
    });
    await page.goto(baseUrl());
    await page
      .getByRole('heading', { name: /^(Sign in|Today)$/ })
      .first()
      .waitFor();
    expect(assets.length).toBeGreaterThan(2);
    expect(
      assets.filter((a) => a.encoding === 'br' || a.encoding === 'gzip').length,
    ).toBeGreaterThan(2);
    for (const asset of assets) {
      // Answers under a kilobyte are not worth compressing (sync-server/src/app.factory.ts).
      if (asset.encoding === undefined) expect(asset.length, asset.url).toBeLessThan(1024);
      else expect(['br', 'gzip'], asset.url).toContain(asset.encoding);
      expect(asset.cache, asset.url).toBe('public, max-age=31536000, immutable');
    }
    await page.close();
  });

  it('opens with the network off after one online visit', async () => {
    const page = await context.newPage();
    await page.goto(baseUrl());
    await page
      .getByRole('heading', { name: /^(Sign in|Today)$/ })
      .first()
      .waitFor();
    // Wait until the service worker has installed (precached the shell); the first install of
    // a prompt-style worker controls the page from the next load on.
    await page.evaluate(async () => {
      await navigator.serviceWorker.ready;
    });
    await page.reload();
    expect(await page.evaluate(() => navigator.serviceWorker.controller !== null)).toBe(true);
    await context.setOffline(true);
    await page.reload();
    await page
      .getByRole('heading', { name: /^(Sign in|Today)$/ })
      .first()
      .waitFor({ timeout: 15_000 });
    const lato = await page.evaluate(() => document.fonts.check('16px Lato'));
    expect(lato).toBe(true);
    await screenshot(page, 'offline-shell');
    await context.setOffline(false);
    await page.close();
  });
});
