// Live changes in Debian's Chromium: two enrolled tablets (each holding the live-changes stream,
// served by whichever of the server's processes took the connection) and a supervisor at a desk.
// An angle saved and sent on one tablet appears on the other's open Visit within 2 s with nobody
// touching it, and the Review desk's tab badge counts a new Dispute without a reload. People and
// the site are made here in the empty migrated database (never the demo seed); the patient, the
// visit and every value are entered through the tablets' screens.
import type { BrowserContext, Page } from 'playwright-core';
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
const site = newSite(`Quay Road Clinic ${run}`);
const person = (name: string, role: Role) =>
  newPerson(name, role, {
    email: `${name.split(' ')[0]!.toLowerCase()}.${run}@quay.test`,
    password: `${role}-pass-${run}`,
  });
const admin = person('Tamsin Reeve', 'admin');
const supervisor = person('Odile Marsh', 'supervisor');
const ada = person('Ada Pryce', 'orthoptist');
const bram = person('Bram Keel', 'orthoptist');
const patient = { given: 'Nell', family: 'Corran', dob: '2016-08-21', number: `QR-${run}` };

/** On the Outbox, presses "Sync now" and waits for an empty Outbox. */
async function syncNow(page: Page) {
  const indicator = await syncIndicator(page);
  await indicator.getByRole('button', { name: 'Sync now' }).click({ timeout: 30_000 });
  await indicator.getByRole('status').getByText('Outbox empty').waitFor({ timeout: 30_000 });
  await indicator.getByRole('button', { name: 'Sync now' }).waitFor({ timeout: 30_000 });
}

describe('live changes between tablets and the Review desk', () => {
  let fleet: BrowserContext;
  let desk: BrowserContext;
  let tabletA: BrowserContext;
  let tabletB: BrowserContext;
  let one: Page;
  let two: Page;

  beforeAll(async () => {
    await seedClinic(site, [admin, supervisor, ada, bram]);
    fleet = await launchTablet();
    desk = await launchTablet();
    tabletA = await launchTablet();
    tabletB = await launchTablet();
    const adminPage = await fleet.newPage();
    await signInAdmin(adminPage, admin);
    one = await enrolClinicianTablet(adminPage, tabletA, {
      name: `Orthoptics 1 ${run}`,
      site,
      clinician: ada,
      pin: '518204',
    });
    two = await enrolClinicianTablet(adminPage, tabletB, {
      name: `Orthoptics 2 ${run}`,
      site,
      clinician: bram,
      pin: '730916',
    });
    await serviceWorkerReady(one);
    await serviceWorkerReady(two);
  }, 180_000);
  afterAll(async () => {
    for (const context of [fleet, desk, tabletA, tabletB]) await context?.close();
  });

  it('shows an edit from one tablet on the other’s open Visit, and a new Dispute on the desk badge', async () => {
    // Both tablets say their changes arrive live.
    for (const page of [one, two])
      await (await syncIndicator(page)).getByText('Live').waitFor({ timeout: 15_000 });

    await one.locator('ion-tab-button[tab="today"]').click();
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
    await syncNow(one);

    // Tablet B is told and pulls by itself: the visit opens there with A's angle, no sync asked.
    await gotoOnTablet(two, `${baseUrl()}/visit/${visitId}`);
    await openSection(two, 'section-amblyoscope');
    await recorded(two, 'Objective horizontal angle')
      .getByText('+12 °')
      .waitFor({ timeout: 15_000 });

    // A changes the angle and sends it; B's open Visit shows it within 2 s, untouched.
    await gotoOnTablet(one, `${baseUrl()}/visit/${visitId}`);
    await typeAngle(one, 'Objective horizontal angle', 'eso 16');
    await syncNow(one);
    const sent = Date.now();
    await recorded(two, 'Objective horizontal angle')
      .getByText('+16 °')
      .waitFor({ timeout: 2_000 });
    const shownAfterMs = Date.now() - sent;
    expect(shownAfterMs).toBeLessThan(2_000);
    await screenshot(two, 'live-visit-arrived');

    // The supervisor at a desk (no tablet): no badge while nothing waits.
    const page = await desk.newPage();
    await openAndSignIn(page, supervisor);
    const reviewTab = page.locator('ion-tab-button[tab="review"]');
    await reviewTab.waitFor();
    await page.waitForTimeout(1_000);
    expect(await reviewTab.locator('ion-badge').count()).toBe(0);

    // The two tablets disagree offline about the angle; A sends first, B's send opens a Dispute.
    await gotoOnTablet(one, `${baseUrl()}/visit/${visitId}`);
    await openSection(one, 'section-amblyoscope');
    await recorded(one, 'Objective horizontal angle').getByText('+16 °').waitFor();
    await tabletA.setOffline(true);
    await tabletB.setOffline(true);
    await typeAngle(one, 'Objective horizontal angle', 'eso 18');
    await typeAngle(two, 'Objective horizontal angle', 'exo 6');
    await tabletA.setOffline(false);
    await syncNow(one);
    await tabletB.setOffline(false);
    await syncNow(two);
    const disputed = Date.now();
    // The desk's badge counts it without a reload (its own refresh is once a minute).
    await reviewTab
      .getByLabel('1 open Dispute, 0 visits to countersign')
      .waitFor({ timeout: 5_000 });
    expect(Date.now() - disputed).toBeLessThan(5_000);
    expect(await reviewTab.locator('ion-badge').textContent()).toBe('1');
    await screenshot(page, 'live-desk-badge');
  }, 240_000);
});
