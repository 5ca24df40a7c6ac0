// Today, Chart and Visit in Debian's Chromium at tablet sizes, against the real server and an
// empty migrated database: the people and the tablet are made here, the patient through the UI.
// Axe checks each screen for serious violations; a screenshot of each goes to the artifacts.
import { randomUUID } from 'node:crypto';
import AxeBuilder from '@axe-core/playwright';
import { hash } from '@node-rs/argon2';
import pg from 'pg';
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TABLET_PORTRAIT, baseUrl, launchTablet, screenshot } from './support/browser';

const run = randomUUID().slice(0, 8);
const siteId = randomUUID();
const siteName = `Larkfield Eye Room ${run}`;
const admin = {
  id: randomUUID(),
  name: 'Odile Marrack',
  email: `odile.${run}@larkfield.test`,
  password: `admin-pass-${run}`,
  role: 'admin',
};
const clinician = {
  id: randomUUID(),
  name: 'Bastian Reyne',
  email: `bastian.${run}@larkfield.test`,
  password: `clinician-pass-${run}`,
  role: 'orthoptist',
};
const patient = { given: 'Juno', family: `Farrowby${run}`, dob: '2015-09-21', number: `LK-${run}` };

function databaseUrl(): string {
  const url = process.env.FUSELIGHT_E2E_DATABASE_URL;
  if (!url)
    throw new Error(
      'FUSELIGHT_E2E_DATABASE_URL is not set: run end-to-end tests through `npm test`.',
    );
  return url;
}

async function seedPeople(): Promise<void> {
  const client = new pg.Client({ connectionString: databaseUrl() });
  await client.connect();
  try {
    await client.query(
      `insert into "site" ("id", "name", "kind", "time_zone") values ($1, $2, 'clinic', 'Europe/London')`,
      [siteId, siteName],
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

async function signIn(page: Page, person: { email: string; password: string }) {
  await page.getByRole('heading', { name: 'Sign in' }).first().waitFor();
  await page.getByLabel('E-mail address').fill(person.email);
  await page.getByLabel('Password').fill(person.password);
  await page.getByRole('button', { name: 'Sign in' }).click();
}

async function enrolTablet(adminPage: Page, tablet: BrowserContext): Promise<Page> {
  await adminPage.goto(`${baseUrl()}/fleet`);
  await adminPage.getByRole('heading', { name: 'Fleet' }).first().waitFor();
  await adminPage.getByLabel('Tablet name').fill(`Charting tablet ${run}`);
  await adminPage.getByLabel(siteName).check();
  await adminPage.getByRole('button', { name: 'Register tablet' }).click();
  const codeLocator = adminPage.getByTestId('enrolment-code');
  await codeLocator.waitFor();
  const code = (await codeLocator.textContent())?.trim() ?? '';
  const page = await tablet.newPage();
  await page.goto(`${baseUrl()}/enrol`);
  await page.getByLabel('Enrolment code').fill(code);
  await page.getByRole('button', { name: 'Enrol', exact: true }).click();
  await signIn(page, clinician);
  await page.getByRole('heading', { name: 'PIN for offline use' }).first().waitFor();
  await page.getByLabel('New PIN (4 to 8 digits)').fill('274913');
  await page.getByLabel('The same PIN again').fill('274913');
  await page.getByRole('button', { name: 'Save PIN' }).click();
  await page.getByRole('heading', { name: 'Today' }).first().waitFor();
  return page;
}

async function noSeriousViolations(page: Page, screenName: string) {
  const results = await new AxeBuilder({ page }).include('main.flc-page').analyze();
  const serious = results.violations.filter(
    (v) => v.impact === 'serious' || v.impact === 'critical',
  );
  expect(
    serious.map(
      (v) => `${screenName}: ${v.id} ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`,
    ),
  ).toEqual([]);
}

describe('the charting screens on an enrolled tablet', () => {
  let desk: BrowserContext;
  let tablet: BrowserContext;
  let page: Page;

  beforeAll(async () => {
    await seedPeople();
    desk = await launchTablet();
    tablet = await launchTablet(TABLET_PORTRAIT);
    const adminPage = await desk.newPage();
    await adminPage.goto(baseUrl());
    await signIn(adminPage, admin);
    await adminPage.getByRole('heading', { name: 'Fleet' }).first().waitFor();
    page = await enrolTablet(adminPage, tablet);
  });
  afterAll(async () => {
    await desk?.close();
    await tablet?.close();
  });

  it('shows Today with its empty list, and registers a patient with a message beside a bad field', async () => {
    await page.getByText('No visits booked or seen today at this site yet.').waitFor();
    await noSeriousViolations(page, 'Today');
    await screenshot(page, 'charting-today');

    await page.getByRole('button', { name: 'New patient' }).click();
    await page.getByLabel('Given name').fill(patient.given);
    await page.getByLabel('Family name').fill(patient.family);
    await page.getByLabel('Date of birth').fill('2999-01-01');
    await page.getByLabel('Clinic number').fill(patient.number);
    await page.getByRole('button', { name: 'Save patient' }).click();
    await page.getByText('Date of birth cannot be in the future').waitFor();
    await page.getByLabel('Date of birth').fill(patient.dob);
    await page.getByRole('button', { name: 'Save patient' }).click();
    await page.waitForURL(/\/chart\//);
  });

  it('shows the Chart and starts a visit from it', async () => {
    await page.getByRole('heading', { name: `${patient.given} ${patient.family}` }).waitFor();
    await page.getByText('No visits yet for this patient.').waitFor();
    await noSeriousViolations(page, 'Chart');
    await screenshot(page, 'charting-chart');
    await page.getByRole('button', { name: 'Start visit' }).click();
    await page.waitForURL(/\/visit\/[0-9a-f-]{36}/);
  });

  it('saves a Section on the Visit, shows the interpretation with its caution and signs', async () => {
    const npc = page.getByRole('region', { name: 'Near point of convergence' });
    await npc.getByLabel('Near point of convergence, break').fill('12');
    await npc.getByLabel('Near point of convergence, recovery').fill('15');
    await npc.getByText('Saved on this tablet').waitFor();
    const interpretation = page.getByRole('region', { name: 'Interpretation' });
    await interpretation.getByText(/receded/).waitFor();
    expect(await interpretation.getByRole('note').textContent()).toContain(
      'does not replace clinical judgement',
    );
    await noSeriousViolations(page, 'Visit');
    await screenshot(page, 'charting-visit');

    await page.getByRole('button', { name: 'Sign visit' }).click();
    await page
      .getByRole('region', { name: 'Sign and Addenda' })
      .getByText('Signed', { exact: true })
      .waitFor();
    expect(await npc.getByLabel('Near point of convergence, break').isDisabled()).toBe(true);
  });

  it('finds the patient on Today by date of birth and shows the signed visit', async () => {
    await page.goto(`${baseUrl()}/today`);
    await page.getByLabel('Name, clinic number or date of birth').fill(patient.dob);
    await page
      .getByRole('list', { name: 'Search results' })
      .getByText(`${patient.given} ${patient.family}`)
      .waitFor();
    await page.getByRole('list', { name: 'Today’s visits' }).getByText('Signed').waitFor();
  });
});
