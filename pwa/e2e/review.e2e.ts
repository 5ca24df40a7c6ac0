// Two tablets disagree about an amblyoscope angle while offline, both sync, and a supervisor
// resolves the dispute on the Review desk; both tablets then pull the chosen value. Everything
// runs in Debian's Chromium: the two tablets are enrolled browsers running the PWA, each with a
// clinician signed in and an offline PIN, and the supervisor works on the Review desk in a third.
// People and the site are made here in the empty migrated database (never the demo seed); the
// patient, the visit and every value are entered through the tablets' screens.
import type { BrowserContext, Locator, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { baseUrl, launchTablet, screenshot } from './support/browser';
import { type Role, newPerson, newSite, runTag, seedClinic } from './support/clinic-fixtures';
import {
  enrolClinicianTablet,
  gotoOnTablet,
  openAndSignIn,
  openSection,
  serviceWorkerReady,
  signInAdmin,
} from './support/tablet-flows';
import { recorded, syncIndicator, typeAngle } from './support/visit-flows';

const run = runTag();
const site = newSite(`Harbour Street Clinic ${run}`);
const person = (name: string, role: Role) =>
  newPerson(name, role, {
    email: `${name.split(' ')[0]!.toLowerCase()}.${run}@harbour.test`,
    password: `${role}-pass-${run}`,
  });
const admin = person('Ines Marlowe', 'admin');
const supervisor = person('Corin Hale', 'supervisor');
const ada = person('Ada Quill', 'orthoptist');
const bram = person('Bram Osei', 'orthoptist');
const patient = { given: 'Mira', family: 'Tenby', dob: '2017-03-14', number: `HS-${run}` };

/** On the Outbox, presses "Sync now" (once it can be pressed) and waits for an empty Outbox. */
async function syncNow(page: Page) {
  const indicator = await syncIndicator(page);
  await indicator.getByRole('button', { name: 'Sync now' }).click({ timeout: 30_000 });
  await indicator.getByRole('status').getByText('Outbox empty').waitFor({ timeout: 30_000 });
  await indicator.getByRole('button', { name: 'Sync now' }).waitFor({ timeout: 30_000 });
  expect(await indicator.getByRole('alert').count()).toBe(0);
}

/**
 * Opens the Visit on a tablet and waits until `shows` holds there, syncing and opening it again
 * while the tablet has not pulled what it waits for (an offline tablet only opens it).
 */
async function openVisit(
  page: Page,
  visitId: string,
  what = 'the visit',
  shows: (amblyoscope: Locator) => Promise<boolean> = async () => true,
) {
  const deadline = Date.now() + 45_000;
  for (;;) {
    await gotoOnTablet(page, `${baseUrl()}/visit/${visitId}`);
    const amblyoscope = await openSection(page, 'section-amblyoscope');
    const arrived = await amblyoscope
      .getByText('Objective horizontal angle')
      .first()
      .waitFor({ timeout: 5_000 })
      .then(() => true)
      .catch(() => false);
    if (arrived && (await shows(amblyoscope))) return;
    if (Date.now() > deadline) {
      await screenshot(page, 'review-tablet-waiting');
      throw new Error(`Timed out waiting for ${what} on the tablet`);
    }
    if (await page.evaluate(() => navigator.onLine)) await syncNow(page);
  }
}

describe('the Review desk resolves a dispute between two tablets', () => {
  let desk: BrowserContext;
  let reviewer: BrowserContext;
  let tabletA: BrowserContext;
  let tabletB: BrowserContext;
  let one: Page;
  let two: Page;

  beforeAll(async () => {
    await seedClinic(site, [admin, supervisor, ada, bram]);
    desk = await launchTablet();
    reviewer = await launchTablet();
    tabletA = await launchTablet();
    tabletB = await launchTablet();
    const adminPage = await desk.newPage();
    await signInAdmin(adminPage, admin);
    one = await enrolClinicianTablet(adminPage, tabletA, {
      name: `Room 2 tablet ${run}`,
      site,
      clinician: ada,
      pin: '482917',
    });
    two = await enrolClinicianTablet(adminPage, tabletB, {
      name: `Room 3 tablet ${run}`,
      site,
      clinician: bram,
      pin: '639205',
    });
    // The shell must be precached before a tablet goes offline.
    await serviceWorkerReady(one);
    await serviceWorkerReady(two);
  }, 180_000);
  afterAll(async () => {
    await desk?.close();
    await reviewer?.close();
    await tabletA?.close();
    await tabletB?.close();
  });

  it('two tablets disagree offline, sync, the supervisor chooses on the desk and both converge', async () => {
    // Tablet A registers the patient, starts the visit, records both angles and syncs.
    await one.getByRole('button', { name: 'New patient' }).click();
    await one.getByLabel('Given name', { exact: true }).fill(patient.given);
    await one.getByLabel('Family name', { exact: true }).fill(patient.family);
    await one.getByLabel('Date of birth', { exact: true }).fill(patient.dob);
    await one.getByLabel('Clinic number', { exact: true }).fill(patient.number);
    await one.getByRole('button', { name: 'Save patient' }).click();
    await one.waitForURL(/\/chart\//);
    await one.getByRole('button', { name: 'Start visit' }).click();
    await one.waitForURL(/\/visit\/[0-9a-f-]{36}/);
    const visitId = /\/visit\/([0-9a-f-]{36})/.exec(one.url())![1]!;
    await typeAngle(one, 'Objective horizontal angle', 'eso 12');
    await typeAngle(one, 'Subjective horizontal angle', 'eso 4');
    await syncNow(one);

    // Tablet B syncs and opens the same visit, with A's angle on it.
    await openVisit(two, visitId);
    expect(await recorded(two, 'Objective horizontal angle').textContent()).toBe('+12 °');

    // Both offline: each re-measures the objective angle from the same version.
    await tabletA.setOffline(true);
    await tabletB.setOffline(true);
    for (const page of [one, two])
      await (await syncIndicator(page)).getByRole('status').getByText('Offline').waitFor();
    await openVisit(one, visitId);
    await typeAngle(one, 'Objective horizontal angle', 'eso 14');
    await openVisit(two, visitId);
    await typeAngle(two, 'Objective horizontal angle', 'exo 8');
    for (const page of [one, two])
      await (await syncIndicator(page)).getByRole('status').getByText('1 waiting').waitFor();

    // Online again, A first: A's value is applied, B's arrives second and is disputed.
    await tabletA.setOffline(false);
    await syncNow(one);
    await tabletB.setOffline(false);
    await syncNow(two);
    await openVisit(
      two,
      visitId,
      'the dispute mark',
      async (amblyoscope) =>
        (await amblyoscope.locator('.flc-dispute', { hasText: 'Disputed' }).count()) > 0,
    );

    const page = await reviewer.newPage();
    await openAndSignIn(page, supervisor);
    await page.locator('ion-tab-button[tab="review"]').click();
    await page.getByRole('button', { name: 'Disputes (1)' }).waitFor({ timeout: 15_000 });
    const row = page.getByRole('row', { name: /Mira Tenby/ });
    await row.getByText('eso 14.0° (24.9Δ) / exo 8.0° (14.1Δ)').waitFor();
    await screenshot(page, 'review-desk-disputes');

    await row
      .getByRole('button', { name: /Open the dispute on Objective horizontal angle/ })
      .click();
    const values = page.getByRole('group', { name: 'Values entered' });
    await values.getByText(/Entered by Bram Osei on Room 3 tablet/).waitFor();
    expect(await values.getByText('Provisional (held now)').count()).toBe(1);
    await page.getByText('Subjective horizontal angle').waitFor();
    await screenshot(page, 'review-desk-dispute');

    await page.getByRole('radio', { name: /eso 14\.0°/ }).check();
    await page.getByRole('button', { name: 'Resolve dispute' }).click();
    await page.getByText('A note saying why is required').waitFor();
    await page
      .getByLabel('Note: why this value (required)')
      .fill('Re-measured together at the bench');
    await page.getByRole('button', { name: 'Resolve dispute' }).click();
    await page
      .getByText('Dispute resolved; every tablet gets the value on its next sync.')
      .waitFor();
    await page.getByText('No open disputes in your sites. Every tablet’s edits agree.').waitFor();
    await screenshot(page, 'review-desk-resolved');

    // Both tablets sync and show the chosen value with no dispute mark.
    for (const tablet of [one, two]) {
      await syncNow(tablet);
      await openVisit(
        tablet,
        visitId,
        'the chosen value without a dispute mark',
        async (amblyoscope) =>
          (await amblyoscope.locator('.flc-dispute').count()) === 0 &&
          (await recorded(tablet, 'Objective horizontal angle').textContent()) === '+14 °',
      );
      const amblyoscope = tablet.locator('#section-amblyoscope');
      expect(await recorded(tablet, 'Objective horizontal angle').textContent()).toBe('+14 °');
      expect(await amblyoscope.getByText('eso 14.0°', { exact: true }).count()).toBe(1);
      expect(await amblyoscope.locator('.flc-dispute').count()).toBe(0);
      expect(await tablet.getByText('Disputed').count()).toBe(0);
    }
  }, 240_000);
});
