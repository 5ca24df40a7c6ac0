// Debian's Chromium through playwright-core (never a downloaded browser), with the flags that
// keep it off the closed network, a fresh profile per launch, and screenshots as artifacts.
import { mkdtempSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

export const baseUrl = (): string => {
  const url = process.env.FUSELIGHT_E2E_BASE_URL;
  if (!url)
    throw new Error('FUSELIGHT_E2E_BASE_URL is not set: run end-to-end tests through `npm test`.');
  return url;
};

/**
 * The same server under the name `localhost`: WebAuthn refuses an IP address as its relying
 * party, so a tablet that uses its platform authenticator is opened here (still a secure
 * context; its storage is apart from the 127.0.0.1 origin's).
 */
export const localhostUrl = (): string => {
  const url = new URL(baseUrl());
  url.hostname = 'localhost';
  return url.origin;
};

export const TABLET_LANDSCAPE = { width: 1280, height: 800 };
export const TABLET_PORTRAIT = { width: 768, height: 1024 };

export type TabletOptions = { persistentStorage?: boolean };

/**
 * A fresh tablet profile. Its browser grants the app persistent storage, as Chromium does for
 * an installed app (headless Chromium refuses it otherwise, and every screen would then show
 * the storage warning); `persistentStorage: false` leaves it refused.
 */
export async function launchTablet(
  viewport = TABLET_LANDSCAPE,
  options: TabletOptions = {},
): Promise<BrowserContext> {
  return (await launchTabletWithProfile(viewport, options)).context;
}

/** A tablet and the folder of its browser profile (for reading what the browser wrote). */
export async function launchTabletWithProfile(
  viewport = TABLET_LANDSCAPE,
  options: TabletOptions = {},
): Promise<{ context: BrowserContext; profile: string }> {
  const profile = mkdtempSync(join(tmpdir(), 'fuselight-e2e-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    viewport,
    hasTouch: true,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
  if (options.persistentStorage !== false) await grantPersistentStorage(context);
  return { context, profile };
}

/**
 * Grants the app's origin persistent storage (Chromium's `durableStorage` permission). The grant
 * lasts as long as the DevTools session that made it, so the session is left open with the
 * context (it closes with it).
 */
export async function grantPersistentStorage(
  context: BrowserContext,
  origin = new URL(baseUrl()).origin,
): Promise<void> {
  const page = context.pages()[0] ?? (await context.newPage());
  const cdp = await context.newCDPSession(page);
  await cdp.send('Browser.grantPermissions', {
    origin,
    permissions: ['durableStorage'],
  });
}

const artifacts = resolve(import.meta.dirname, '..', '..', '..', 'artifacts', 'screenshots');

export async function screenshot(page: Page, name: string): Promise<string> {
  mkdirSync(artifacts, { recursive: true });
  const path = join(artifacts, `${name}.png`);
  await page.screenshot({ path, fullPage: false });
  return path;
}
