#!/usr/bin/env node
// Renders the install icons from icons/source/*.svg in Debian's Chromium (the same browser the
// end-to-end tests use). The PNGs are committed; run this again after changing the artwork.
import { readFileSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { chromium } from 'playwright-core';
import { repoRoot } from './lib.mjs';

const out = join(repoRoot, 'icons', 'generated-public', 'icons');
mkdirSync(out, { recursive: true });
const targets = [
  ['fuselight-icon.svg', 'icon-192.png', 192],
  ['fuselight-icon.svg', 'icon-512.png', 512],
  ['fuselight-maskable.svg', 'maskable-192.png', 192],
  ['fuselight-maskable.svg', 'maskable-512.png', 512],
  ['fuselight-maskable.svg', 'apple-touch-icon-180.png', 180],
  ['fuselight-icon.svg', 'favicon-32.png', 32],
];
const browser = await chromium.launch({
  executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
  args: [
    '--no-sandbox',
    '--disable-gpu',
    '--disable-background-networking',
    '--disable-component-update',
    '--disable-sync',
    '--no-first-run',
  ],
});
try {
  for (const [source, name, size] of targets) {
    const svg = readFileSync(join(repoRoot, 'icons', 'source', source), 'utf8');
    const page = await browser.newPage({ viewport: { width: size, height: size } });
    await page.setContent(
      `<html><body style="margin:0;background:transparent">${svg.replace('<svg ', `<svg width="${size}" height="${size}" `)}</body></html>`,
    );
    await page.screenshot({ path: join(out, name), omitBackground: true });
    await page.close();
    console.log(`icons/generated-public/icons/${name} (${size}×${size})`);
  }
} finally {
  await browser.close();
}
