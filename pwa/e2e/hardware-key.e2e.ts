// The hardware share of a tablet's PIN in Debian's Chromium (docs/threat-model.md), with
// Chromium's virtual platform authenticator (DevTools protocol, WebAuthn domain, PRF on): a
// clinician sets a PIN on an enrolled tablet, which makes a credential and wraps the data key
// under the PIN and the credential's PRF output together; a reload locks it; a wrong PIN fails
// and counts; the right PIN with the authenticator unlocks; the Fleet screen says the tablet is
// hardware-backed; and with the credential removed (a screen lock reset) the unlock says so in
// words and offers a password sign-in, after which the patient is still there and the PIN can be
// set again with a new credential.
import type { BrowserContext, CDPSession, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  TABLET_PORTRAIT,
  grantPersistentStorage,
  launchTablet,
  localhostUrl,
  screenshot,
} from './support/browser';
import { newPerson, newSite, runTag, seedClinic } from './support/clinic-fixtures';
import {
  openFleet,
  registerTablet,
  setPin,
  signIn,
  signInAdmin,
  signInClinician,
} from './support/tablet-flows';

const run = runTag();
const site = newSite(`Kestrel Lane Clinic ${run}`);
const admin = newPerson('Odile Ferrante', 'admin', {
  email: `odile.${run}@kestrel.test`,
  password: `admin-pass-${run}`,
});
const clinician = newPerson('Bram Achterberg', 'orthoptist', {
  email: `bram.${run}@kestrel.test`,
  password: `clinician-pass-${run}`,
});
const patient = {
  given: 'Isolde',
  family: `Marchbank${run}`,
  dob: '2017-09-03',
  number: `KL-${run}`,
};
const tabletName = `Hardware tablet ${run}`;
const PIN = '730514';

type VirtualCredential = { credentialId: string; isResidentCredential: boolean };

describe('a tablet whose PIN needs its platform authenticator', () => {
  let desk: BrowserContext;
  let tablet: BrowserContext;
  let adminPage: Page;
  let page: Page;
  let cdp: CDPSession;
  let authenticatorId: string;
  const credentials = async () =>
    (
      (await cdp.send('WebAuthn.getCredentials', { authenticatorId })) as {
        credentials: VirtualCredential[];
      }
    ).credentials;

  const unlockWith = async (pin: string) => {
    await page.getByRole('button', { name: `Unlock as ${clinician.name}` }).click();
    await page.getByLabel(`PIN for ${clinician.name}`).fill(pin);
    await page.getByRole('button', { name: 'Unlock', exact: true }).click();
  };

  beforeAll(async () => {
    await seedClinic(site, [admin, clinician]);
    desk = await launchTablet();
    adminPage = await desk.newPage();
    await signInAdmin(adminPage, admin);
    await openFleet(adminPage);
    const code = await registerTablet(adminPage, tabletName, site);

    tablet = await launchTablet(TABLET_PORTRAIT);
    await grantPersistentStorage(tablet, localhostUrl());
    page = await tablet.newPage();
    // The virtual authenticator belongs to this page: a platform one, with user verification
    // and the PRF extension (its hmac-secret), as a tablet's screen lock would be.
    cdp = await tablet.newCDPSession(page);
    await cdp.send('WebAuthn.enable');
    ({ authenticatorId } = (await cdp.send('WebAuthn.addVirtualAuthenticator', {
      options: {
        protocol: 'ctap2',
        transport: 'internal',
        hasResidentKey: true,
        hasUserVerification: true,
        isUserVerified: true,
        hasPrf: true,
      },
    })) as { authenticatorId: string });

    await page.goto(`${localhostUrl()}/enrol`);
    await page.getByRole('heading', { name: 'Enrol this tablet' }).first().waitFor();
    await page.getByLabel('Enrolment code').fill(code);
    await page.getByRole('button', { name: 'Enrol', exact: true }).click();
    await signInClinician(page, clinician);
  }, 120_000);
  afterAll(async () => {
    await desk?.close();
    await tablet?.close();
  });

  it('sets a PIN with the authenticator, locks, refuses a wrong PIN and opens with both', async () => {
    await page
      .getByText('your PIN opens the tablet’s data only together with it', { exact: false })
      .waitFor();
    expect(await credentials()).toEqual([]);
    await setPin(page, PIN).catch(async (error: unknown) => {
      await screenshot(page, 'hardware-key-set-pin-failed');
      throw error;
    });
    // One credential was made for the slot; the data key is wrapped under the PIN and its PRF.
    expect(await credentials()).toHaveLength(1);

    await page.getByRole('button', { name: 'New patient' }).click();
    await page.getByLabel('Given name').fill(patient.given);
    await page.getByLabel('Family name').fill(patient.family);
    await page.getByLabel('Date of birth').fill(patient.dob);
    await page.getByLabel('Clinic number').fill(patient.number);
    await page.getByRole('button', { name: 'Save patient' }).click();
    await page.waitForURL(/\/chart\//);
    const chart = page.url();

    // A reload starts locked.
    await page.goto(chart);
    await unlockWith('111111');
    await page.getByText('That PIN is not right. 4 attempts left.').waitFor();
    await unlockWith(PIN);
    await page.waitForURL(chart);
    await page.getByText(`${patient.given} ${patient.family}`).first().waitFor();
  });

  it('shows the tablet as hardware-backed on the Fleet screen', async () => {
    let dataKey: string | null = null;
    for (let attempt = 0; attempt < 20 && dataKey !== 'Hardware-backed'; attempt += 1) {
      await openFleet(adminPage);
      const row = adminPage.getByRole('row', { name: new RegExp(tabletName) });
      const headers = await adminPage.getByRole('columnheader').allTextContents();
      const cell = row.locator('td, th').nth(headers.indexOf('Data key'));
      dataKey = ((await cell.textContent()) ?? '').split(' (')[0]!.trim();
      if (dataKey !== 'Hardware-backed') await adminPage.waitForTimeout(1_000);
    }
    expect(dataKey).toBe('Hardware-backed');
    await screenshot(adminPage, 'fleet-hardware-backed');
  });

  it('says in words when the credential is gone, offers a password sign-in and loses nothing', async () => {
    const [credential] = await credentials();
    await cdp.send('WebAuthn.removeCredential', {
      authenticatorId,
      credentialId: credential!.credentialId,
    });
    await page.goto(`${localhostUrl()}/today`);
    await unlockWith(PIN);
    const alert = page
      .getByRole('alert')
      .filter({ hasText: 'This tablet’s screen lock did not confirm you' });
    await alert.waitFor();
    expect(await alert.textContent()).toContain('nothing on this tablet is lost');
    await screenshot(page, 'hardware-key-credential-gone');
    // Not counted as a wrong PIN.
    expect(await page.getByText('5 PIN attempts left').count()).toBe(1);

    await page.getByRole('link', { name: 'Sign in with your password' }).click();
    await signIn(page, clinician);
    // The sign-in offers to set the PIN again, saying why; a new credential is made for it.
    await page.getByRole('heading', { name: 'PIN for offline use' }).first().waitFor();
    await page.getByText('Last time, this tablet’s screen lock did not confirm you').waitFor();
    await setPin(page, '862047');
    expect(await credentials()).toHaveLength(1);
    expect((await credentials())[0]!.credentialId).not.toBe(credential!.credentialId);
    const search = page.getByLabel('Name, clinic number or date of birth');
    await search.fill(patient.family);
    await page
      .getByRole('list', { name: 'Search results' })
      .getByText(`${patient.given} ${patient.family}`)
      .waitFor();

    // The new PIN with the new credential opens the tablet after a reload.
    await page.goto(`${localhostUrl()}/today`);
    await unlockWith('862047');
    await page.getByRole('heading', { name: 'Today' }).first().waitFor();
  });
});
