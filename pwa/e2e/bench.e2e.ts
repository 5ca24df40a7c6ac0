// The Bench in Debian's Chromium at a tablet viewport, against the real server and an empty
// migrated database: people and tablets are made here. A clinician on an enrolled tablet goes
// offline, registers a patient and charts a full Bench session, reloads offline and finds it all,
// then goes online and the records reach the server. A second tablet edits other fields of the
// same visit and both edits survive. Axe checks each Bench step.
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectNoSeriousViolations } from './support/accessibility';
import { baseUrl, launchTablet, screenshot } from './support/browser';
import { newPerson, newSite, runTag, seedClinic, withDb } from './support/clinic-fixtures';
import {
  enrolClinicianTablet,
  gotoOnTablet,
  reloadOnTablet,
  serviceWorkerReady,
  signInAdmin,
} from './support/tablet-flows';

const run = runTag();
const site = newSite(`Harbour Orthoptics ${run}`);
const admin = newPerson('Tomas Ardent', 'admin', {
  email: `tomas.${run}@harbour.test`,
  password: `admin-pass-${run}`,
});
const clinician = newPerson('Priya Lund', 'orthoptist', {
  email: `priya.${run}@harbour.test`,
  password: `clinician-pass-${run}`,
});
const patient = { given: 'Wren', family: `Calloway${run}`, dob: '2017-03-14', number: `HB-${run}` };

async function serverFields(collection: string, visitId: string) {
  return withDb(async (client) => {
    const result = await client.query<{ fields: Record<string, unknown> }>(
      `select "fields" from "sync_record" where "collection" = $1 and "fields"->>'visitId' = $2 and not "deleted"`,
      [collection, visitId],
    );
    return result.rows.map((row) => row.fields);
  });
}

async function until<T>(what: string, probe: () => Promise<T | null | undefined | false>) {
  const deadline = Date.now() + 45_000;
  for (;;) {
    const value = await probe();
    if (value) return value;
    if (Date.now() > deadline) throw new Error(`Timed out waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 500));
  }
}

/**
 * Registers a tablet on the Fleet (admin page), enrols `tablet` with the code, signs the
 * clinician in with a PIN and waits until the shell is precached.
 */
async function enrolTablet(adminPage: Page, tablet: BrowserContext, name: string): Promise<Page> {
  const page = await enrolClinicianTablet(adminPage, tablet, {
    name,
    site,
    clinician,
    pin: '582913',
  });
  // The shell must be precached before the tablet goes offline.
  await serviceWorkerReady(page);
  return page;
}

const axeStep = (page: Page, step: string) => expectNoSeriousViolations(page, '.fl-bench', step);

async function goStep(page: Page, title: string) {
  await page
    .getByRole('navigation', { name: 'Bench steps' })
    .getByRole('button', { name: new RegExp(`^\\d+\\s*${title}\\s*(recorded|not done)?$`) })
    .click();
  await page.getByRole('heading', { name: title, level: 2 }).waitFor();
}

async function typeAngle(page: Page, label: string, text: string) {
  // A step's readings share one stepper: choose the reading first.
  await page.getByRole('button', { name: new RegExp(`^${label}: `) }).click();
  const box = page.getByRole('textbox', { name: `Type ${label}`, exact: true });
  await box.fill(text);
  await box.press('Enter');
}

const savedHere = (page: Page) =>
  page.locator('.fl-bench-save--saved, .fl-bench-save').getByText('Saved on this tablet').waitFor();

describe('the Bench on an enrolled tablet', () => {
  let desk: BrowserContext;
  let tabletA: BrowserContext;
  let tabletB: BrowserContext;
  let adminPage: Page;
  let page: Page;
  let visitId = '';

  beforeAll(async () => {
    await seedClinic(site, [admin, clinician]);
    desk = await launchTablet();
    tabletA = await launchTablet();
    tabletB = await launchTablet();
    adminPage = await desk.newPage();
    await signInAdmin(adminPage, admin);
  });
  afterAll(async () => {
    await desk?.close();
    await tabletA?.close();
    await tabletB?.close();
  });

  it('charts a full Bench session offline, keeps it through a reload and syncs it', async () => {
    page = await enrolTablet(adminPage, tabletA, `Bench tablet A ${run}`);
    await tabletA.setOffline(true);

    // Register the patient and start the visit with the network off.
    await page.getByRole('button', { name: 'New patient' }).click();
    await page.getByLabel('Given name', { exact: true }).fill(patient.given);
    await page.getByLabel('Family name', { exact: true }).fill(patient.family);
    await page.getByLabel('Date of birth', { exact: true }).fill(patient.dob);
    await page.getByLabel('Clinic number', { exact: true }).fill(patient.number);
    await page.getByRole('button', { name: 'Save patient' }).click();
    await page.waitForURL(/\/chart\//);
    await gotoOnTablet(page, `${baseUrl()}/today`);
    await page.getByLabel('Name, clinic number or date of birth').fill(patient.family);
    await page
      .getByRole('button', { name: `Start visit: ${patient.family} ${patient.given}` })
      .or(page.getByRole('button', { name: new RegExp(`Start visit: .*${patient.family}`) }))
      .first()
      .click();
    await page.waitForURL(/\/visit\/[0-9a-f-]{36}/);
    visitId = /\/visit\/([0-9a-f-]{36})/.exec(page.url())![1]!;

    await gotoOnTablet(page, `${baseUrl()}/bench/${visitId}`);
    await page.getByRole('heading', { name: 'Setup', level: 2 }).waitFor();
    expect(await page.locator('ion-tab-bar').isVisible()).toBe(false);
    await page
      .getByRole('region', { name: /^Sync status/ })
      .getByText('Offline')
      .waitFor();

    // Setup.
    await page.getByLabel('Interpupillary distance (mm)').fill('58');
    await page.getByLabel('Interpupillary distance (mm)').press('Enter');
    await page
      .getByRole('group', { name: 'Own correction worn' })
      .getByRole('radio', { name: 'Yes', exact: true })
      .click();
    await page
      .getByRole('group', { name: 'Fixing eye' })
      .getByRole('radio', { name: 'Right eye', exact: true })
      .click();
    await page
      .getByRole('group', { name: 'Locked tube' })
      .getByRole('radio', { name: 'Right tube', exact: true })
      .click();
    await page
      .getByRole('group', { name: 'Dials zeroed' })
      .getByRole('radio', { name: 'Yes', exact: true })
      .click();
    await savedHere(page);
    await axeStep(page, 'setup');
    await screenshot(page, 'bench-setup');

    // Simultaneous perception.
    await goStep(page, 'Simultaneous perception');
    await page
      .getByRole('group', { name: 'Both pictures seen together?' })
      .getByRole('radio', { name: 'Present', exact: true })
      .click();
    await savedHere(page);
    await axeStep(page, 'simultaneous perception');

    // Subjective and objective angles.
    await goStep(page, 'Subjective angle');
    await typeAngle(page, 'Subjective horizontal angle', 'eso 1');
    await typeAngle(page, 'Subjective vertical angle', 'R/L 2');
    await savedHere(page);
    await axeStep(page, 'subjective angle');
    await goStep(page, 'Objective angle');
    await typeAngle(page, 'Objective horizontal angle', 'eso 14');
    await page
      .getByTestId('correspondence-result')
      .getByText(/harmonious ARC · angle of anomaly 13\.0°/)
      .waitFor();
    await savedHere(page);
    await axeStep(page, 'objective angle');
    await screenshot(page, 'bench-objective-correspondence');

    // Suppression scotoma.
    await goStep(page, 'Suppression scotoma');
    await page
      .getByRole('group', { name: 'Eye tested' })
      .getByRole('radio', { name: 'Left eye', exact: true })
      .click();
    await typeAngle(page, 'Picture lost, convergent side', 'eso 18');
    await typeAngle(page, 'Picture lost, divergent side', 'eso 10');
    await typeAngle(page, 'Picture lost, upper', 'up 3');
    await typeAngle(page, 'Picture lost, lower', 'down 2');
    await page.getByRole('img', { name: /Scotoma of the left eye/ }).waitFor();
    await savedHere(page);
    await axeStep(page, 'suppression scotoma');
    await screenshot(page, 'bench-scotoma-map');

    // Fusion.
    await goStep(page, 'Fusion');
    await page
      .getByRole('group', { name: 'Right control mark seen' })
      .getByRole('radio', { name: 'Seen', exact: true })
      .click();
    await page
      .getByRole('group', { name: 'Left control mark seen' })
      .getByRole('radio', { name: 'Seen', exact: true })
      .click();
    await page
      .getByRole('group', { name: 'Fusion', exact: true })
      .getByRole('radio', { name: 'Present', exact: true })
      .click();
    await savedHere(page);
    await axeStep(page, 'fusion');

    // Fusional ranges: divergence first.
    await goStep(page, 'Fusional ranges');
    await typeAngle(page, 'Divergence break', 'exo 4');
    await typeAngle(page, 'Divergence recovery', 'exo 2');
    await typeAngle(page, 'Convergence break', 'eso 38');
    await typeAngle(page, 'Convergence recovery', 'eso 30');
    await page.getByTestId('proximal-convergence-note').waitFor();
    await savedHere(page);
    await axeStep(page, 'fusional ranges');
    await screenshot(page, 'bench-fusional-ranges');

    // Gross stereopsis: answer whatever the runner says to show (a patient who sees it).
    await goStep(page, 'Gross stereopsis');
    for (let i = 0; i < 5; i += 1) {
      const shown = (await page.getByTestId('stereo-next').textContent()) ?? '';
      const word = shown.includes('toward the patient') ? 'toward' : 'away';
      await page.getByRole('button', { name: `Patient says: ${word}` }).click();
      await page
        .getByTestId('stereo-next')
        .getByText(`Trial ${i + 2}`)
        .waitFor();
    }
    await page.getByTestId('stereo-verdict').getByText('Gross stereopsis shown').waitFor();
    expect(await page.getByTestId('stereo-chance').textContent()).toBe('1/32 = 0.03125');
    await savedHere(page);
    await axeStep(page, 'gross stereopsis');
    await screenshot(page, 'bench-stereo-runner');

    // Summary.
    await goStep(page, 'Summary');
    await page
      .getByText(/supports and does not replace clinical judgement/)
      .first()
      .waitFor();
    await axeStep(page, 'summary');
    await screenshot(page, 'bench-summary');

    // Reload while offline: everything is still there.
    await reloadOnTablet(page);
    await page.getByRole('heading', { name: 'Summary', level: 2 }).waitFor({ timeout: 20_000 });
    const summary = (await page.locator('.fl-bench-summary').textContent()) ?? '';
    expect(summary).toContain('Interpupillary distance 58 mm');
    expect(summary).toContain('harmonious abnormal retinal correspondence');
    expect(summary).toContain('Scotoma of the left eye');
    expect(summary).toContain('Gross stereopsis shown');
    expect(await serverFields('amblyoscopeAngles', visitId)).toEqual([]);

    // Online again: the Outbox drains to the server.
    await tabletA.setOffline(false);
    const angles = await until('the angles to reach the server', async () => {
      const rows = await serverFields('amblyoscopeAngles', visitId);
      return rows[0]?.objectiveHorizontalDeg === 14 ? rows[0] : null;
    });
    expect(angles.subjectiveVerticalPd).toBe(2);
    const stereo = await until('the stereo trials to reach the server', async () => {
      const rows = await serverFields('grossStereopsis', visitId);
      return (rows[0]?.trials as unknown[] | undefined)?.length === 5 ? rows[0] : null;
    });
    expect(stereo.trials).toHaveLength(5);
    await page
      .getByRole('region', { name: /^Sync status/ })
      .getByText('Outbox empty')
      .waitFor({ timeout: 45_000 });
  }, 180_000);

  it('keeps both tablets’ edits to different fields of the same visit', async () => {
    expect(visitId).not.toBe('');
    const second = await enrolTablet(adminPage, tabletB, `Bench tablet B ${run}`);
    // Tablet B pulls the visit, then records slide names while tablet A adds extra lenses.
    // Its first pull brings the visit; until then the Bench says the visit is not here yet.
    await until('tablet B to pull the visit', async () => {
      await gotoOnTablet(second, `${baseUrl()}/bench/${visitId}?step=fusion`);
      return second
        .getByRole('heading', { name: 'Fusion', level: 2 })
        .waitFor({ timeout: 5_000 })
        .then(() => true)
        .catch(() => false);
    }).catch(async (error: unknown) => {
      await screenshot(second, 'bench-second-tablet-no-visit');
      throw error;
    });
    const slide = second.getByLabel('Slide used');
    await slide.fill('Keeper’s hut pair');
    await slide.press('Enter');
    await savedHere(second);

    await gotoOnTablet(page, `${baseUrl()}/bench/${visitId}?step=setup`);
    const lenses = page.getByLabel('Extra lenses, right holder');
    await lenses.fill('+3.00 DS');
    await lenses.press('Enter');
    await savedHere(page);

    await until('both edits on the server', async () => {
      const [fusion] = await serverFields('fusion', visitId);
      const [setup] = await serverFields('amblyoscopeSetup', visitId);
      return fusion?.slideUsed === 'Keeper’s hut pair' && setup?.extraLensesRight === '+3.00 DS';
    });
    const [fusion] = await serverFields('fusion', visitId);
    expect(fusion?.result).toBe('present');
    const [setup] = await serverFields('amblyoscopeSetup', visitId);
    expect(setup?.interpupillaryDistanceMm).toBe(58);
    await screenshot(second, 'bench-second-tablet');
  }, 180_000);
});
