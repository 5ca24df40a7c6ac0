// The steps through the app's own screens that several end-to-end files take to get a clinician
// working on an enrolled tablet: sign in, register a tablet on the Fleet, enrol a browser with the
// one-time code, sign the clinician in on it and set the offline PIN. Each step waits for the
// screen it ends on, so a step that does not arrive fails the test.
import type { BrowserContext, Locator, Page } from 'playwright-core';
import { baseUrl } from './browser';
import type { Person, Site } from './clinic-fixtures';

/** On the Sign in screen (waited for), signs the person in. */
export async function signIn(page: Page, person: Pick<Person, 'email' | 'password'>) {
  await page.getByRole('heading', { name: 'Sign in' }).first().waitFor();
  await page.getByLabel('E-mail address').fill(person.email);
  await page.getByLabel('Password').fill(person.password);
  await page.getByRole('button', { name: 'Sign in' }).click();
}

/** Opens the app and signs the person in (on a browser that is not an enrolled tablet). */
export async function openAndSignIn(page: Page, person: Pick<Person, 'email' | 'password'>) {
  await page.goto(baseUrl());
  await signIn(page, person);
}

/** Opens the app, signs the admin in and waits for the Fleet, where admins land. */
export async function signInAdmin(page: Page, admin: Pick<Person, 'email' | 'password'>) {
  await openAndSignIn(page, admin);
  await page.getByRole('heading', { name: 'Fleet' }).first().waitFor();
}

/** Goes to the Fleet screen on a signed-in admin's page. */
export async function openFleet(adminPage: Page) {
  await adminPage.goto(`${baseUrl()}/fleet`);
  await adminPage.getByRole('heading', { name: 'Fleet' }).first().waitFor();
}

/** On the Fleet, registers a tablet for the site and returns the one-time enrolment code shown. */
export async function registerTablet(adminPage: Page, name: string, site: Site): Promise<string> {
  await adminPage.getByLabel('Tablet name').fill(name);
  await adminPage.getByLabel(site.name).check();
  await adminPage.getByRole('button', { name: 'Register tablet' }).click();
  const codeLocator = adminPage.getByTestId('enrolment-code');
  await codeLocator.waitFor();
  return (await codeLocator.textContent())?.trim() ?? '';
}

/** Opens the enrolment screen in the tablet's browser and enrols it with the code. */
export async function enrolTablet(tablet: BrowserContext, code: string): Promise<Page> {
  const page = await tablet.newPage();
  await page.goto(`${baseUrl()}/enrol`);
  await page.getByRole('heading', { name: 'Enrol this tablet' }).first().waitFor();
  await page.getByLabel('Enrolment code').fill(code);
  await page.getByRole('button', { name: 'Enrol', exact: true }).click();
  return page;
}

/** Signs the clinician in on an enrolled tablet, which offers a PIN for offline use next. */
export async function signInClinician(page: Page, clinician: Pick<Person, 'email' | 'password'>) {
  await signIn(page, clinician);
  await page.getByRole('heading', { name: 'PIN for offline use' }).first().waitFor();
}

/** On the PIN offer, sets the PIN and waits for the clinician's Today. */
export async function setPin(page: Page, pin: string) {
  await page.getByLabel('New PIN (at least 6 digits)').fill(pin);
  await page.getByLabel('The same PIN again').fill(pin);
  await page.getByRole('button', { name: 'Save PIN' }).click();
  await page.getByRole('heading', { name: 'Today' }).first().waitFor();
}

/** The person and PIN set on each tablet page, to unlock it after a reload. */
const pinsOf = new WeakMap<Page, { name: string; pin: string }>();

/**
 * A protected tablet starts locked after a reload (docs/threat-model.md): when the unlock screen
 * shows, unlocks with the PIN set on this page, which goes back to the screen that was asked for.
 */
export async function unlockIfLocked(page: Page) {
  const known = pinsOf.get(page);
  if (!known) return;
  const unlockAs = page.getByRole('button', { name: `Unlock as ${known.name}` });
  const appeared = await unlockAs
    .waitFor({ timeout: 5_000 })
    .then(() => true)
    .catch(() => false);
  if (!appeared) return;
  await unlockAs.click();
  await page.getByLabel(`PIN for ${known.name}`).fill(known.pin);
  await page.getByRole('button', { name: 'Unlock', exact: true }).click();
  await page.waitForURL((url) => !url.pathname.startsWith('/unlock'));
}

/**
 * Another tab of the same tablet: it opens locked, as a reload does, so it is unlocked with the
 * PIN of the person on `like` (the tab already unlocked).
 */
export async function openAnotherTab(like: Page, url: string): Promise<Page> {
  const page = await like.context().newPage();
  const known = pinsOf.get(like);
  if (known) pinsOf.set(page, known);
  await gotoOnTablet(page, url);
  return page;
}

/** Opens `url` on a tablet page, unlocking it with its PIN if it asks. */
export async function gotoOnTablet(page: Page, url: string) {
  await page.goto(url);
  await unlockIfLocked(page);
}

/** Reloads a tablet page, unlocking it with its PIN if it asks. */
export async function reloadOnTablet(page: Page) {
  await page.reload();
  await unlockIfLocked(page);
}

/**
 * From a signed-in admin's page: registers a tablet on the Fleet, enrols `tablet` with the code,
 * signs the clinician in on it and sets the PIN. Returns the tablet's page on Today.
 */
export async function enrolClinicianTablet(
  adminPage: Page,
  tablet: BrowserContext,
  options: { name: string; site: Site; clinician: Person; pin: string },
): Promise<Page> {
  await openFleet(adminPage);
  const code = await registerTablet(adminPage, options.name, options.site);
  const page = await enrolTablet(tablet, code);
  await signInClinician(page, options.clinician);
  await setPin(page, options.pin);
  pinsOf.set(page, { name: options.clinician.name, pin: options.pin });
  return page;
}

/** Waits until the service worker is ready (the shell precached), e.g. before going offline. */
export async function serviceWorkerReady(page: Page) {
  await page.evaluate(async () => {
    await navigator.serviceWorker.ready;
  });
}

/**
 * Opens a Visit Section folded to its one-line summary (its heading is the toggle) and returns
 * the Section; an open one is left open.
 */
export async function openSection(page: Page, id: string): Promise<Locator> {
  const section = page.locator(`#${id}`);
  const toggle = section.locator('h2 button.flc-fold');
  await toggle.waitFor();
  if ((await toggle.getAttribute('aria-expanded')) !== 'true') await toggle.click();
  await section.locator(`#${id}-body`).waitFor();
  return section;
}
