// Today, Chart and Visit in Debian's Chromium at tablet sizes, against the real server and an
// empty migrated database: the people and the tablet are made here, the patient through the UI.
// Axe checks each screen for serious violations; a screenshot of each goes to the artifacts.
import { readFileSync } from 'node:fs';
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectNoSeriousViolations } from './support/accessibility';
import { TABLET_PORTRAIT, baseUrl, launchTablet, screenshot } from './support/browser';
import { newPerson, newSite, runTag, seedClinic } from './support/clinic-fixtures';
import { enrolClinicianTablet, gotoOnTablet, signInAdmin } from './support/tablet-flows';

const run = runTag();
const site = newSite(`Larkfield Eye Room ${run}`);
const admin = newPerson('Odile Marrack', 'admin', {
  email: `odile.${run}@larkfield.test`,
  password: `admin-pass-${run}`,
});
const clinician = newPerson('Bastian Reyne', 'orthoptist', {
  email: `bastian.${run}@larkfield.test`,
  password: `clinician-pass-${run}`,
});
const patient = { given: 'Juno', family: `Farrowby${run}`, dob: '2015-09-21', number: `LK-${run}` };

const noSeriousViolations = (page: Page, screenName: string) =>
  expectNoSeriousViolations(page, 'main.flc-page', screenName);

describe('the charting screens on an enrolled tablet', () => {
  let desk: BrowserContext;
  let tablet: BrowserContext;
  let page: Page;

  beforeAll(async () => {
    await seedClinic(site, [admin, clinician]);
    desk = await launchTablet();
    tablet = await launchTablet(TABLET_PORTRAIT);
    const adminPage = await desk.newPage();
    await signInAdmin(adminPage, admin);
    page = await enrolClinicianTablet(adminPage, tablet, {
      name: `Charting tablet ${run}`,
      site,
      clinician,
      pin: '274913',
    });
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
    // Each Section is listed folded to one line; its heading opens it in place.
    expect(await npc.locator('.flc-fold-summary').textContent()).toBe('Nothing recorded yet');
    await npc.getByRole('button', { name: 'Near point of convergence' }).click();
    await npc.getByLabel('Near point of convergence, break').fill('12');
    const recovery = npc.getByLabel('Near point of convergence, recovery');
    await recovery.fill('15');
    await npc.getByText('Saved on this tablet').waitFor();
    // The sync indicator sits in its own strip above the tab bar: a field scrolled to the bottom
    // of the screen can be tapped, nothing floats over it.
    const covered = await recovery.evaluate((input) => {
      input.scrollIntoView({ block: 'end' });
      const box = input.getBoundingClientRect();
      const hit = document.elementFromPoint(box.right - 4, box.bottom - 4);
      return hit === input || input.contains(hit) ? null : (hit?.outerHTML.slice(0, 120) ?? 'none');
    });
    expect(covered).toBeNull();
    await npc.getByRole('button', { name: 'Near point of convergence' }).click();
    expect(await npc.locator('.flc-fold-summary').textContent()).toMatch(
      /^Near point of convergence, break 12 cm · Near point of convergence, recovery 15 cm/,
    );
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

  it('offers Download FHIR on the signed visit and saves the Bundle with the recorded finding', async () => {
    const panel = page.locator('#section-hospital');
    const button = panel.getByRole('button', { name: 'Download FHIR' });
    // The server answers once the signed visit has synced; until then the panel says why not.
    // 15 tries of about 4 s each stay inside the 90 s test timeout.
    let saved: string | null = null;
    for (let attempt = 0; attempt < 15 && saved === null; attempt += 1) {
      await button.waitFor();
      const download = page.waitForEvent('download', { timeout: 3_000 }).catch(() => null);
      await button.click();
      const done = await download;
      if (done) {
        expect(done.suggestedFilename()).toMatch(/^visit-[0-9a-f-]{36}\.fhir\.json$/);
        saved = readFileSync((await done.path())!, 'utf8');
      } else {
        await panel.getByText(/^Not downloaded: /).waitFor();
        await page.waitForTimeout(1_000);
      }
    }
    expect(saved).not.toBeNull();
    const bundle = JSON.parse(saved!) as {
      resourceType: string;
      type: string;
      entry: { resource: { resourceType: string; status?: string; valueQuantity?: unknown } }[];
    };
    expect([bundle.resourceType, bundle.type]).toEqual(['Bundle', 'collection']);
    const encounter = bundle.entry.find((e) => e.resource.resourceType === 'Encounter')!;
    expect(encounter.resource.status).toBe('finished');
    expect(bundle.entry.map((e) => e.resource.valueQuantity)).toContainEqual({
      value: 12,
      unit: 'cm',
      system: 'http://unitsofmeasure.org',
      code: 'cm',
    });
    await panel.getByText('FHIR export downloaded.').waitFor();
  });

  it('finds the patient on Today by date of birth and shows the signed visit', async () => {
    await gotoOnTablet(page, `${baseUrl()}/today`);
    await page.getByLabel('Name, clinic number or date of birth').fill(patient.dob);
    await page
      .getByRole('list', { name: 'Search results' })
      .getByText(`${patient.given} ${patient.family}`)
      .waitFor();
    const badge = page.getByRole('list', { name: 'Today’s visits' }).getByText('Signed');
    await badge.waitFor();
    // A pill of one line beside the name, not stretched to the height of the row's buttons.
    const box = (await badge.boundingBox())!;
    expect(box.height).toBeLessThan(36);
    expect(box.width).toBeGreaterThan(box.height);
  });
});
