// Two tabs of the app on one tablet (one Chromium profile): one tab syncs and the other follows,
// so every Outbox entry is pushed exactly once whichever tab it was made in, both tabs show what
// the other stored, and syncing passes to the other tab when the leading one closes. Then the
// tablet's storage: persistence granted on the You screen, and refused on a second tablet, where
// the warning sits above every screen without covering a field.
import type { BrowserContext, Page, Request } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectNoSeriousViolations } from './support/accessibility';
import { baseUrl, launchTablet, screenshot } from './support/browser';
import { newPerson, newSite, runTag, seedClinic } from './support/clinic-fixtures';
import { enrolClinicianTablet, openAnotherTab, signInAdmin } from './support/tablet-flows';

const run = runTag();
const site = newSite(`Quillbrook Eye Room ${run}`);
const admin = newPerson('Perpetua Vance', 'admin', {
  email: `perpetua.${run}@quillbrook.test`,
  password: `admin-pass-${run}`,
});
const clinician = newPerson('Lorcan Ashby', 'orthoptist', {
  email: `lorcan.${run}@quillbrook.test`,
  password: `clinician-pass-${run}`,
});
const patientOne = {
  given: 'Ottilie',
  family: `Brack${run}`,
  dob: '2014-02-11',
  number: `QB1-${run}`,
};
const patientTwo = {
  given: 'Ambrose',
  family: `Welk${run}`,
  dob: '2016-07-30',
  number: `QB2-${run}`,
};
const patientThree = {
  given: 'Saoirse',
  family: `Lund${run}`,
  dob: '2013-05-05',
  number: `QB3-${run}`,
};

/** A sync request seen on the tablet's profile, and the tab that sent it. */
interface SyncCall {
  kind: 'push' | 'pull';
  tab: Page | null;
  changeIds: string[];
  recordIds: string[];
}

function tabOf(request: Request): Page | null {
  try {
    return request.frame().page();
  } catch {
    return null; // not sent by a page (a service worker)
  }
}

/**
 * Opens Today through the tab bar. A reload would end the tab's document, and with it its
 * leadership: the other tab would take over, as it should, but this test follows one leader.
 */
async function openToday(page: Page) {
  await page.locator('ion-tab-button[tab="today"]').click();
  await page.getByRole('button', { name: 'New patient' }).filter({ visible: true }).waitFor();
}

/** Registers a patient through the Today screen's form and waits for their Chart. */
async function registerPatient(page: Page, patient: typeof patientOne) {
  await openToday(page);
  await page.getByRole('button', { name: 'New patient' }).filter({ visible: true }).click();
  await page.getByLabel('Given name').filter({ visible: true }).fill(patient.given);
  await page.getByLabel('Family name').filter({ visible: true }).fill(patient.family);
  await page.getByLabel('Date of birth').filter({ visible: true }).fill(patient.dob);
  await page.getByLabel('Clinic number').filter({ visible: true }).fill(patient.number);
  await page.getByRole('button', { name: 'Save patient' }).filter({ visible: true }).click();
  await page.waitForURL(/\/chart\//);
}

/** The change ids in the tablet's Outbox, read from IndexedDB as the app stores them. */
function outboxChangeIds(page: Page): Promise<string[]> {
  return page.evaluate(
    () =>
      new Promise<string[]>((resolve, reject) => {
        const open = indexedDB.open('fuselight');
        open.onerror = () => reject(open.error);
        open.onsuccess = () => {
          const db = open.result;
          const read = db.transaction('outbox').objectStore('outbox').getAll();
          read.onsuccess = () => {
            resolve((read.result as Array<{ changeId: string }>).map((e) => e.changeId));
            db.close();
          };
          read.onerror = () => reject(read.error);
        };
      }),
  );
}

/** The patient id of the Chart a page shows. */
async function chartId(page: Page): Promise<string> {
  return /\/chart\/([^/?#]+)/.exec(page.url())![1]!;
}

/** The line of the docked sync bar that says what waits in the Outbox. */
const syncLine = (page: Page) => page.locator('.fl-sync-dock [role="status"]');

async function searchFinds(page: Page, patient: typeof patientOne) {
  await openToday(page);
  await page
    .getByLabel('Name, clinic number or date of birth')
    .filter({ visible: true })
    .fill(patient.number);
  await page
    .getByRole('list', { name: 'Search results' })
    .filter({ visible: true })
    .getByText(`${patient.given} ${patient.family}`)
    .waitFor();
}

describe('two tabs of the app on one tablet', () => {
  let desk: BrowserContext;
  let tablet: BrowserContext;
  let first: Page;
  let second: Page;
  const calls: SyncCall[] = [];

  beforeAll(async () => {
    await seedClinic(site, [admin, clinician]);
    desk = await launchTablet();
    tablet = await launchTablet();
    tablet.on('request', (request) => {
      const path = new URL(request.url()).pathname;
      if (path === '/api/sync/push' && request.method() === 'POST') {
        const body = request.postDataJSON() as {
          changes: Array<{ changeId: string; recordId: string }>;
        };
        calls.push({
          kind: 'push',
          tab: tabOf(request),
          changeIds: body.changes.map((c) => c.changeId),
          recordIds: body.changes.map((c) => c.recordId),
        });
      } else if (path === '/api/sync/pull') {
        calls.push({ kind: 'pull', tab: tabOf(request), changeIds: [], recordIds: [] });
      }
    });
    const adminPage = await desk.newPage();
    await signInAdmin(adminPage, admin);
    first = await enrolClinicianTablet(adminPage, tablet, {
      name: `Two-tab tablet ${run}`,
      site,
      clinician,
      pin: '615273',
    });
  });
  afterAll(async () => {
    await desk?.close();
    await tablet?.close();
  });

  it('pushes each Outbox entry once from the tab that leads, and both tabs show both edits', async () => {
    second = await openAnotherTab(first, `${baseUrl()}/today`);
    await second.getByRole('heading', { name: 'Today' }).first().waitFor();

    const since = calls.length;
    // The leading tab may sync on its own schedule meanwhile, so every entry seen is collected.
    const seen = new Set<string>();
    await registerPatient(first, patientOne);
    for (const id of await outboxChangeIds(first)) seen.add(id);
    await registerPatient(second, patientTwo);
    for (const id of await outboxChangeIds(second)) seen.add(id);

    await second.locator('.fl-sync-dock').getByRole('button', { name: 'Sync now' }).click();
    await syncLine(second).getByText('Outbox empty').waitFor({ timeout: 30_000 });
    await syncLine(first).getByText('Outbox empty').waitFor({ timeout: 30_000 });
    expect(await outboxChangeIds(first)).toEqual([]);

    const pushes = calls.slice(since).filter((call) => call.kind === 'push');
    const pushed = pushes.flatMap((call) => call.changeIds);
    expect(new Set(pushed).size).toBe(pushed.length); // no entry pushed twice
    for (const id of seen) expect(pushed).toContain(id); // every entry pushed
    expect(pushes.flatMap((call) => call.recordIds)).toEqual(
      expect.arrayContaining([await chartId(first), await chartId(second)]),
    );
    const syncingTabs = new Set(calls.slice(since).map((call) => call.tab));
    expect(syncingTabs.size).toBe(1); // one tab pushed and pulled; the other did neither
    expect(syncingTabs.has(null)).toBe(false);

    // Each tab shows the patient the other one registered.
    await searchFinds(first, patientTwo);
    await searchFinds(second, patientOne);
  });

  it('passes syncing to the other tab when the leading tab closes', async () => {
    const leader = calls.filter((call) => call.kind === 'push').at(-1)!.tab!;
    const follower = leader === first ? second : first;
    await leader.close();
    const since = calls.length;
    await registerPatient(follower, patientThree);
    const patientId = await chartId(follower);
    await follower.locator('.fl-sync-dock').getByRole('button', { name: 'Sync now' }).click();
    await syncLine(follower).getByText('Outbox empty').waitFor({ timeout: 30_000 });
    const pushes = calls.slice(since).filter((call) => call.kind === 'push');
    expect(pushes.flatMap((call) => call.recordIds)).toContain(patientId);
    expect(new Set(pushes.map((call) => call.tab))).toEqual(new Set([follower]));
    // Over the whole test, no entry went to the server twice.
    const everyPush = calls.filter((call) => call.kind === 'push').flatMap((c) => c.changeIds);
    expect(new Set(everyPush).size).toBe(everyPush.length);

    // The tab that now syncs says so on You, with the storage the browser granted.
    await follower.locator('ion-tab-button[tab="person"]').click();
    await follower
      .getByText('This tab syncs the tablet for every tab of Fuselight open on it.')
      .waitFor();
    const storage = follower.getByRole('region', { name: 'Storage on this tablet' });
    await expect
      .poll(() => storage.textContent(), { timeout: 20_000 })
      .toContain('Persistent storage: granted.');
    expect(await storage.textContent()).toMatch(/used of .* \(\d+ %\)\./);
    expect(await follower.getByRole('region', { name: 'Storage warning' }).count()).toBe(0);
  });
});

describe('a tablet whose browser refuses persistent storage', () => {
  let desk: BrowserContext;
  let tablet: BrowserContext;
  let page: Page;
  const refusedRun = runTag();
  const refusedSite = newSite(`Harrowgate Outreach ${refusedRun}`);
  const refusedAdmin = newPerson('Wilhelmina Crane', 'admin', {
    email: `wilhelmina.${refusedRun}@harrowgate.test`,
    password: `admin-pass-${refusedRun}`,
  });
  const refusedClinician = newPerson('Tobiah Rusk', 'orthoptist', {
    email: `tobiah.${refusedRun}@harrowgate.test`,
    password: `clinician-pass-${refusedRun}`,
  });

  beforeAll(async () => {
    await seedClinic(refusedSite, [refusedAdmin, refusedClinician]);
    desk = await launchTablet();
    tablet = await launchTablet(undefined, { persistentStorage: false });
    const adminPage = await desk.newPage();
    await signInAdmin(adminPage, refusedAdmin);
    page = await enrolClinicianTablet(adminPage, tablet, {
      name: `Refused-storage tablet ${refusedRun}`,
      site: refusedSite,
      clinician: refusedClinician,
      pin: '839104',
    });
  });
  afterAll(async () => {
    await desk?.close();
    await tablet?.close();
  });

  it('warns above every screen, in the flow, without covering a field', async () => {
    const banner = page.getByRole('region', { name: 'Storage warning' });
    await banner.getByText(/has not granted Fuselight persistent storage/).waitFor();
    const search = page.getByLabel('Name, clinic number or date of birth');
    const bannerBox = (await banner.boundingBox())!;
    const searchBox = (await search.boundingBox())!;
    expect(searchBox.y).toBeGreaterThanOrEqual(bannerBox.y + bannerBox.height);
    await expectNoSeriousViolations(page, 'body', 'Today under the storage warning');
    await screenshot(page, 'storage-warning-today');

    await page.locator('ion-tab-button[tab="person"]').click();
    await page
      .getByRole('region', { name: 'Storage on this tablet' })
      .getByText(/^Persistent storage: not granted\./)
      .waitFor();
    await banner.getByText(/has not granted Fuselight persistent storage/).waitFor();
  });
});
