// A protected tablet in Debian's Chromium (docs/threat-model.md): an enrolled tablet pulls a
// patient another tablet created and finds them by name on Today; then every IndexedDB database
// and store of the page, read raw, and every file of the browser profile (IndexedDB, HTTP cache,
// service-worker caches) are searched for the patient's name: it appears nowhere. A colleague's
// name, kept in the clear by design (the people who signed in here), is found in the same
// search, so the search itself is shown to work.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  TABLET_PORTRAIT,
  baseUrl,
  launchTablet,
  launchTabletWithProfile,
  screenshot,
} from './support/browser';
import { newPerson, newSite, runTag, seedClinic } from './support/clinic-fixtures';
import { enrolClinicianTablet, signInAdmin } from './support/tablet-flows';

const run = runTag();
const site = newSite(`Harrowgate Outreach ${run}`);
const admin = newPerson('Ines Valbruk', 'admin', {
  email: `ines.${run}@harrowgate.test`,
  password: `admin-pass-${run}`,
});
const charting = newPerson('Petra Olumide', 'orthoptist', {
  email: `petra.${run}@harrowgate.test`,
  password: `clinician-pass-${run}`,
});
const reading = newPerson('Kasimir Threlfall', 'orthoptist', {
  email: `kasimir.${run}@harrowgate.test`,
  password: `clinician-pass-b-${run}`,
});
const patient = {
  given: 'Wrenna',
  family: `Quillfeather${run}`,
  dob: '2016-02-17',
  number: `HG-${run}`,
};

/** Every value of every IndexedDB database of the page, read raw, as text. */
async function rawIndexedDb(page: Page): Promise<string> {
  return page.evaluate(async () => {
    const decoder = new TextDecoder('utf-8', { fatal: false });
    const textOf = (value: unknown): string => {
      if (value instanceof ArrayBuffer) return decoder.decode(new Uint8Array(value));
      if (ArrayBuffer.isView(value))
        return decoder.decode(new Uint8Array(value.buffer, value.byteOffset, value.byteLength));
      if (value instanceof Blob) return '[blob]';
      if (Array.isArray(value)) return value.map(textOf).join(',');
      if (typeof value === 'object' && value !== null)
        return Object.entries(value)
          .map(([k, v]) => `${k}:${textOf(v)}`)
          .join(',');
      return String(value);
    };
    const parts: string[] = [];
    for (const { name } of await indexedDB.databases()) {
      if (!name) continue;
      const db = await new Promise<IDBDatabase>((resolve, reject) => {
        const request = indexedDB.open(name);
        request.onsuccess = () => resolve(request.result);
        request.onerror = () => reject(request.error);
      });
      for (const store of db.objectStoreNames) {
        const values = await new Promise<unknown[]>((resolve, reject) => {
          const request = db.transaction(store).objectStore(store).getAll();
          request.onsuccess = () => resolve(request.result as unknown[]);
          request.onerror = () => reject(request.error);
        });
        parts.push(`## ${name}/${store}\n${values.map(textOf).join('\n')}`);
      }
      db.close();
    }
    return parts.join('\n');
  });
}

function filesUnder(dir: string): string[] {
  return readdirSync(dir).flatMap((entry) => {
    const path = join(dir, entry);
    const stat = statSync(path, { throwIfNoEntry: false });
    if (!stat) return [];
    return stat.isDirectory() ? filesUnder(path) : [path];
  });
}

/** The profile's files that hold `text` in UTF-8 or UTF-16 (how browsers store strings). */
function profileFilesHolding(profile: string, text: string): string[] {
  const needles = [Buffer.from(text, 'utf8'), Buffer.from(text, 'utf16le')];
  return filesUnder(profile).filter((file) => {
    const bytes = readFileSync(file);
    return needles.some((needle) => bytes.includes(needle));
  });
}

describe('a protected tablet in Chromium', () => {
  let desk: BrowserContext;
  let first: BrowserContext;
  let second: BrowserContext;
  let profile: string;
  let page: Page;

  // Two enrolments, each with an argon2id key slot, on a shared machine: a longer wait.
  beforeAll(async () => {
    await seedClinic(site, [admin, charting, reading]);
    desk = await launchTablet();
    first = await launchTablet(TABLET_PORTRAIT);
    const adminPage = await desk.newPage();
    await signInAdmin(adminPage, admin);
    const chartingPage = await enrolClinicianTablet(adminPage, first, {
      name: `Charting tablet ${run}`,
      site,
      clinician: charting,
      pin: '604182',
    }).catch(async (error: unknown) => {
      await screenshot(first.pages().at(-1)!, 'protected-enrol-failed');
      throw error;
    });
    await chartingPage.getByRole('button', { name: 'New patient' }).click();
    await chartingPage.getByLabel('Given name').fill(patient.given);
    await chartingPage.getByLabel('Family name').fill(patient.family);
    await chartingPage.getByLabel('Date of birth').fill(patient.dob);
    await chartingPage.getByLabel('Clinic number').fill(patient.number);
    await chartingPage.getByRole('button', { name: 'Save patient' }).click();
    await chartingPage.waitForURL(/\/chart\//);
    expect(await rawIndexedDb(chartingPage)).not.toContain(patient.family);

    ({ context: second, profile } = await launchTabletWithProfile(TABLET_PORTRAIT));
    page = await enrolClinicianTablet(adminPage, second, {
      name: `Reading tablet ${run}`,
      site,
      clinician: reading,
      pin: '918273',
    });
  }, 240_000);
  afterAll(async () => {
    await desk?.close();
    await first?.close();
    await second?.close();
  });

  it('pulls the patient, finds them by name on Today, and holds their name nowhere in the clear', async () => {
    // A reload starts locked: the unlock screen, and the PIN opens the tablet again.
    await page.goto(`${baseUrl()}/today`);
    await page.getByRole('button', { name: `Unlock as ${reading.name}` }).click();
    await page.getByLabel(`PIN for ${reading.name}`).fill('918273');
    await page.getByRole('button', { name: 'Unlock', exact: true }).click();
    await page.getByRole('heading', { name: 'Today' }).first().waitFor();
    // The tab bar comes a task after the screen (app/SignedInApp.tsx), with Today's tab selected.
    await page.locator('ion-tab-button[tab="today"].tab-selected').waitFor();
    expect(await page.locator('.fl-tab-bar-pending').count()).toBe(0);
    expect(await page.locator('ion-tab-button.tab-selected').count()).toBe(1);

    // The first tablet pushes in the background; search until this tablet has pulled it.
    const search = page.getByLabel('Name, clinic number or date of birth');
    const results = page.getByRole('list', { name: 'Search results' });
    for (let attempt = 0; attempt < 30; attempt += 1) {
      await search.fill('');
      await search.fill(patient.family);
      const found = await results
        .getByText(`${patient.given} ${patient.family}`)
        .waitFor({ timeout: 2_000 })
        .then(() => true)
        .catch(() => false);
      if (found) break;
    }
    await results.getByText(`${patient.given} ${patient.family}`).waitFor({ timeout: 5_000 });

    const raw = await rawIndexedDb(page);
    expect(raw).toContain('## fuselight/records');
    for (const secret of [patient.family, patient.number, patient.dob]) {
      expect(raw).not.toContain(secret);
    }
    // Closing the browser writes everything it holds to the profile's files.
    await second.close();
    expect(profileFilesHolding(profile, patient.family)).toEqual([]);
    expect(profileFilesHolding(profile, patient.number)).toEqual([]);
    // The same search finds what is kept in the clear by design: it does look.
    expect(profileFilesHolding(profile, reading.name).length).toBeGreaterThan(0);
  });
});
