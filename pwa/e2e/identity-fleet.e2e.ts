// An admin registers a tablet on the Fleet screen, a second browser (the tablet) enrols with the
// one-time code, and a clinician signs in on it. People and the site are made here, in the empty
// migrated database, with the same argon2 hashing the server uses; never the demo seed.
import { randomUUID } from 'node:crypto';
import { hash } from '@node-rs/argon2';
import pg from 'pg';
import type { BrowserContext } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { baseUrl, launchTablet, screenshot } from './support/browser';

const run = randomUUID().slice(0, 8);
const siteId = randomUUID();
const admin = {
  id: randomUUID(),
  name: 'Ines Marlowe',
  email: `ines.${run}@lakeside.test`,
  password: `admin-pass-${run}`,
  role: 'admin',
};
const clinician = {
  id: randomUUID(),
  name: 'Dara Fennimore',
  email: `dara.${run}@lakeside.test`,
  password: `clinician-pass-${run}`,
  role: 'orthoptist',
};

async function seedPeople(): Promise<void> {
  const url = process.env.FUSELIGHT_E2E_DATABASE_URL;
  if (!url)
    throw new Error(
      'FUSELIGHT_E2E_DATABASE_URL is not set: run end-to-end tests through `npm test`.',
    );
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    await client.query(
      `insert into "site" ("id", "name", "kind", "time_zone") values ($1, $2, 'clinic', 'Europe/London')`,
      [siteId, `Lakeside Eye Unit ${run}`],
    );
    for (const person of [admin, clinician]) {
      await client.query(
        `insert into "app_user" ("id", "email", "name", "role", "password_hash", "created_at", "updated_at")
         values ($1, $2, $3, $4, $5, now(), now())`,
        [person.id, person.email, person.name, person.role, await hash(person.password)],
      );
      await client.query(`insert into "user_site" ("user_id", "site_id") values ($1, $2)`, [
        person.id,
        siteId,
      ]);
    }
  } finally {
    await client.end();
  }
}

describe('identity on the tablet', () => {
  let desk: BrowserContext;
  let tablet: BrowserContext;
  beforeAll(async () => {
    await seedPeople();
    desk = await launchTablet();
    tablet = await launchTablet();
  });
  afterAll(async () => {
    await desk?.close();
    await tablet?.close();
  });

  it('an admin registers a tablet, the tablet enrols with the code and a clinician signs in on it', async () => {
    const adminPage = await desk.newPage();
    await adminPage.goto(baseUrl());
    await adminPage.getByRole('heading', { name: 'Sign in' }).first().waitFor();
    await adminPage.getByLabel('E-mail address').fill(admin.email);
    await adminPage.getByLabel('Password').fill(admin.password);
    await adminPage.getByRole('button', { name: 'Sign in' }).click();

    // Admins land on the Fleet and see no clinical tab.
    await adminPage.getByRole('heading', { name: 'Fleet' }).first().waitFor();
    expect(await adminPage.locator('ion-tab-button[tab="today"]').count()).toBe(0);
    await adminPage.getByLabel('Tablet name').fill(`Room 3 tablet ${run}`);
    await adminPage.getByLabel(`Lakeside Eye Unit ${run}`).check();
    await adminPage.getByRole('button', { name: 'Register tablet' }).click();
    const codeLocator = adminPage.getByTestId('enrolment-code');
    await codeLocator.waitFor();
    const code = (await codeLocator.textContent())?.trim() ?? '';
    expect(code).toMatch(/^[0-9A-Z-]{4,}$/);
    expect(await adminPage.locator('.fl-id-qr svg').count()).toBe(1);
    await screenshot(adminPage, 'identity-fleet-enrolment-code');

    const tabletPage = await tablet.newPage();
    await tabletPage.goto(`${baseUrl()}/enrol`);
    await tabletPage.getByRole('heading', { name: 'Enrol this tablet' }).first().waitFor();
    await tabletPage.getByLabel('Enrolment code').fill(code);
    await tabletPage.getByRole('button', { name: 'Enrol', exact: true }).click();

    await tabletPage.getByRole('heading', { name: 'Sign in' }).first().waitFor();
    await tabletPage.getByText('This tablet is enrolled with the clinic').waitFor();
    await tabletPage.getByLabel('E-mail address').fill(clinician.email);
    await tabletPage.getByLabel('Password').fill(clinician.password);
    await tabletPage.getByRole('button', { name: 'Sign in' }).click();

    // On an enrolled tablet a PIN is offered next; then the clinician's Today.
    await tabletPage.getByRole('heading', { name: 'PIN for offline use' }).first().waitFor();
    await screenshot(tabletPage, 'identity-tablet-pin-offer');
    await tabletPage.getByLabel('New PIN (4 to 8 digits)').fill('739204');
    await tabletPage.getByLabel('The same PIN again').fill('739204');
    await tabletPage.getByRole('button', { name: 'Save PIN' }).click();
    await tabletPage.getByRole('heading', { name: 'Today' }).first().waitFor();
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
