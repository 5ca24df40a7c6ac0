// An admin registers a tablet on the Fleet screen, a second browser (the tablet) enrols with the
// one-time code, and a clinician signs in on it. People and the site are made here, in the empty
// migrated database, with the same argon2 hashing the server uses; never the demo seed.
import type { BrowserContext } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchTablet, screenshot } from './support/browser';
import { newPerson, newSite, runTag, seedClinic } from './support/clinic-fixtures';
import {
  enrolTablet,
  registerTablet,
  setPin,
  signInAdmin,
  signInClinician,
} from './support/tablet-flows';

const run = runTag();
const site = newSite(`Lakeside Eye Unit ${run}`);
const admin = newPerson('Ines Marlowe', 'admin', {
  email: `ines.${run}@lakeside.test`,
  password: `admin-pass-${run}`,
});
const clinician = newPerson('Dara Fennimore', 'orthoptist', {
  email: `dara.${run}@lakeside.test`,
  password: `clinician-pass-${run}`,
});

describe('identity on the tablet', () => {
  let desk: BrowserContext;
  let tablet: BrowserContext;
  beforeAll(async () => {
    await seedClinic(site, [admin, clinician]);
    desk = await launchTablet();
    tablet = await launchTablet();
  });
  afterAll(async () => {
    await desk?.close();
    await tablet?.close();
  });

  it('an admin registers a tablet, the tablet enrols with the code and a clinician signs in on it', async () => {
    const adminPage = await desk.newPage();
    await signInAdmin(adminPage, admin);

    // Admins land on the Fleet and see no clinical tab.
    expect(await adminPage.locator('ion-tab-button[tab="today"]').count()).toBe(0);
    const code = await registerTablet(adminPage, `Room 3 tablet ${run}`, site);
    expect(code).toMatch(/^[0-9A-Z-]{4,}$/);
    expect(await adminPage.locator('.fl-id-qr svg').count()).toBe(1);
    await screenshot(adminPage, 'identity-fleet-enrolment-code');

    const tabletPage = await enrolTablet(tablet, code);
    await tabletPage.getByRole('heading', { name: 'Sign in' }).first().waitFor();
    await tabletPage.getByText('This tablet is enrolled with the clinic').waitFor();

    // On an enrolled tablet a PIN is offered next; then the clinician's Today.
    await signInClinician(tabletPage, clinician);
    await screenshot(tabletPage, 'identity-tablet-pin-offer');
    await setPin(tabletPage, '739204');
    expect(await tabletPage.locator('ion-tab-button[tab="fleet"]').count()).toBe(0);
    await screenshot(tabletPage, 'identity-tablet-clinician-today');

    // The Fleet now shows the tablet in use.
    await adminPage.reload();
    await adminPage
      .getByRole('row', { name: new RegExp(`Room 3 tablet ${run}`) })
      .getByText('In use')
      .waitFor();
    await screenshot(adminPage, 'identity-fleet-in-use');
  });
});
