// Steps on an enrolled tablet's Outbox and Visit that several end-to-end files share: the sync
// indicator, an angle typed into the Amblyoscope panel, and the value its summary shows.
import type { Page } from 'playwright-core';
import { openSection } from './tablet-flows';

/** Opens the Outbox tab and returns its sync indicator (the line and its "Sync now"). */
export async function syncIndicator(page: Page) {
  await page.locator('ion-tab-button[tab="outbox"]').click();
  const indicator = page.locator('section.fl-sync-indicator').first();
  await indicator.waitFor();
  return indicator;
}

/** Types an angle into the Visit's Amblyoscope panel and waits until it is saved here. */
export async function typeAngle(page: Page, label: string, text: string) {
  const amblyoscope = await openSection(page, 'section-amblyoscope');
  const box = amblyoscope.getByRole('textbox', { name: `Type ${label}`, exact: true });
  await box.fill(text);
  await box.press('Enter');
  await amblyoscope.getByText('Saved on this tablet').waitFor();
}

/** The value the Visit's Amblyoscope summary shows for a recorded field. */
export const recorded = (page: Page, label: string) =>
  page
    .locator('#section-amblyoscope dl > div')
    .filter({ has: page.locator('dt', { hasText: label }) })
    .locator('dd');
