// The Bench worked without touching the screen, in Debian's Chromium at a landscape tablet's
// 1280×800: after opening the Bench, a clinician charts a complete amblyoscope assessment, all
// nine steps, with the default keys of a keyboard, a numeric keypad and a clicker alone (no
// pointer or touch event reaches the page), and every step fits the screen without scrolling.
// The records stored on the tablet, then on the server after the "sync now" key, are checked
// field by field; axe checks every step. The same findings are then charted by touch on a second
// patient, and the key presses and taps each path needed are printed side by side.
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectNoSeriousViolations } from './support/accessibility';
import { baseUrl, launchTablet, screenshot } from './support/browser';
import { newPerson, newSite, runTag, seedClinic, withDb } from './support/clinic-fixtures';
import {
  enrolClinicianTablet,
  gotoOnTablet,
  serviceWorkerReady,
  signInAdmin,
} from './support/tablet-flows';

const run = runTag();
const site = newSite(`Lantern Eye Unit ${run}`);
const admin = newPerson('Odile Marr', 'admin', {
  email: `odile.${run}@lantern.test`,
  password: `admin-pass-${run}`,
});
const clinician = newPerson('Kofi Brandt', 'orthoptist', {
  email: `kofi.${run}@lantern.test`,
  password: `clinician-pass-${run}`,
});
const keyed = { given: 'Ines', family: `Tarrow${run}`, dob: '2016-09-02', number: `LK-${run}` };
const tapped = { given: 'Milo', family: `Tarrow${run}`, dob: '2015-01-21', number: `LT-${run}` };
const full = { given: 'Aster', family: `Tarrow${run}`, dob: '2014-06-30', number: `LF-${run}` };

/** The findings both paths chart (the same as the Bench's other end-to-end file). */
const EXPECTED: Record<string, Record<string, unknown>> = {
  amblyoscopeSetup: {
    interpupillaryDistanceMm: 58,
    ownCorrectionWorn: true,
    extraLensesRight: null,
    extraLensesLeft: null,
    fixingEye: 'right',
    lockedTube: 'right',
    dialsZeroed: true,
    skippedReason: null,
  },
  simultaneousPerception: { result: 'present', suppressingEye: null, skippedReason: null },
  amblyoscopeAngles: {
    subjectiveHorizontalDeg: 1,
    subjectiveVerticalPd: 2,
    subjectiveTorsionDeg: null,
    objectiveHorizontalDeg: 14,
    objectiveVerticalPd: null,
    objectiveTorsionDeg: null,
    skippedReason: null,
  },
  suppressionScotoma: {
    deviatingEye: 'left',
    horizontalLostConvergentDeg: 18,
    horizontalLostDivergentDeg: 10,
    verticalLostUpperDeg: 3,
    verticalLostLowerDeg: -2,
    skippedReason: null,
  },
  fusion: { rightMarkSeen: true, leftMarkSeen: true, result: 'present', skippedReason: null },
  fusionalRanges: {
    divergenceBreakDeg: -4,
    divergenceRecoveryDeg: -2,
    convergenceBreakDeg: 38,
    convergenceRecoveryDeg: 30,
    rightUpBreakPd: null,
    leftUpBreakPd: null,
    incycloBreakDeg: null,
    excycloBreakDeg: null,
    normsTable: 'fuselight.fusional-norms.amblyoscope@1.0.0',
    skippedReason: null,
  },
  grossStereopsis: { skippedReason: null },
};

/** Each expected field of each Section, as "collection.field = value", for a readable diff. */
function fieldByField(sections: Record<string, Record<string, unknown> | undefined>): string[] {
  return Object.entries(EXPECTED).flatMap(([collection, fields]) =>
    Object.keys(fields).map(
      (name) => `${collection}.${name} = ${JSON.stringify(sections[collection]?.[name] ?? null)}`,
    ),
  );
}
const expectedLines = () =>
  Object.entries(EXPECTED).flatMap(([collection, fields]) =>
    Object.entries(fields).map(
      ([name, value]) => `${collection}.${name} = ${JSON.stringify(value)}`,
    ),
  );

/**
 * Which Sections the tablet holds for the visit, read raw from IndexedDB. Only the index fields
 * are readable there (the values are sealed, docs/threat-model.md); the values are compared on
 * the server after the push.
 */
async function tabletSections(page: Page, visitId: string) {
  return page.evaluate(async (id) => {
    const db = await new Promise<IDBDatabase>((resolve, reject) => {
      const open = indexedDB.open('fuselight');
      open.onsuccess = () => resolve(open.result);
      open.onerror = () => reject(open.error);
    });
    const rows = await new Promise<
      Array<{ collection: string; deleted: boolean; fields: Record<string, unknown> }>
    >((resolve, reject) => {
      const read = db.transaction('records').objectStore('records').getAll();
      read.onsuccess = () => resolve(read.result);
      read.onerror = () => reject(read.error);
    });
    db.close();
    return Object.fromEntries(
      rows.filter((row) => row.fields?.visitId === id).map((row) => [row.collection, row.fields]),
    );
  }, visitId);
}

async function serverSections(visitId: string) {
  return withDb(async (client) => {
    const result = await client.query<{ collection: string; fields: Record<string, unknown> }>(
      `select "collection", "fields" from "sync_record" where "fields"->>'visitId' = $1 and not "deleted"`,
      [visitId],
    );
    return Object.fromEntries(result.rows.map((row) => [row.collection, row.fields]));
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

/** Registers a patient and starts their visit (before the Bench: pointer allowed there). */
async function startVisit(page: Page, patient: typeof keyed): Promise<string> {
  await gotoOnTablet(page, `${baseUrl()}/today`);
  await page.getByRole('button', { name: 'New patient' }).click();
  await page.getByLabel('Given name', { exact: true }).fill(patient.given);
  await page.getByLabel('Family name', { exact: true }).fill(patient.family);
  await page.getByLabel('Date of birth', { exact: true }).fill(patient.dob);
  await page.getByLabel('Clinic number', { exact: true }).fill(patient.number);
  await page.getByRole('button', { name: 'Save patient' }).click();
  await page.waitForURL(/\/chart\//);
  await gotoOnTablet(page, `${baseUrl()}/today`);
  await page.getByLabel('Name, clinic number or date of birth').fill(patient.number);
  await page
    .getByRole('button', { name: new RegExp(`Start visit: .*${patient.family}`) })
    .first()
    .click();
  await page.waitForURL(/\/visit\/[0-9a-f-]{36}/);
  return /\/visit\/([0-9a-f-]{36})/.exec(page.url())![1]!;
}

async function openBench(page: Page, visitId: string) {
  await gotoOnTablet(page, `${baseUrl()}/bench/${visitId}`);
  await page.getByRole('heading', { name: 'Setup', level: 2 }).waitFor();
}

/** The Bench's scroll area and the page: neither may need scrolling at 1280×800. */
/**
 * Starts recording layout shifts inside the Bench that move a control (a button, an answer, a
 * field): a control that moves after it is drawn can put another under a finger between its
 * sight and its tap. What moved is kept with how far it moved.
 */
async function recordControlShifts(page: Page) {
  await page.evaluate(() => {
    const CONTROL = 'button, input, select, textarea, label, a[href], [role="button"]';
    const shifts: { step: string; moved: string }[] = [];
    (window as unknown as { benchShifts: typeof shifts }).benchShifts = shifts;
    type Source = {
      node: Node | null;
      previousRect: DOMRectReadOnly;
      currentRect: DOMRectReadOnly;
    };
    new PerformanceObserver((list) => {
      for (const entry of list.getEntries() as (PerformanceEntry & { sources?: Source[] })[]) {
        for (const { node, previousRect: was, currentRect: now } of entry.sources ?? []) {
          if (!(node instanceof Element) || !node.closest('.fl-bench')) continue;
          if (!node.matches(CONTROL) && !node.querySelector(CONTROL)) continue;
          const name = node.getAttribute('aria-label') ?? node.textContent?.trim().slice(0, 40);
          shifts.push({
            step: document.getElementById('fl-bench-step-title')?.textContent ?? '',
            moved: `${node.tagName.toLowerCase()}.${[...node.classList].join('.')} “${name}” by (${Math.round(now.x - was.x)}, ${Math.round(now.y - was.y)}) px`,
          });
        }
      }
    }).observe({ type: 'layout-shift' });
  });
}

const controlShifts = (page: Page) =>
  page.evaluate(
    () => (window as unknown as { benchShifts: { step: string; moved: string }[] }).benchShifts,
  );

async function expectFits(page: Page, step: string) {
  const size = await page.locator('.fl-bench').evaluate(async (bench) => {
    const content = bench.closest('ion-content') as HTMLElement & {
      getScrollElement(): Promise<HTMLElement>;
    };
    const scroller = await content.getScrollElement();
    return {
      height: scroller.scrollHeight,
      visibleHeight: scroller.clientHeight,
      width: scroller.scrollWidth,
      visibleWidth: scroller.clientWidth,
      page: document.documentElement.scrollHeight,
      parts: [
        ...bench.querySelectorAll<HTMLElement>('.fl-bench__bar, .fl-bench__steps, .fl-bench__main'),
      ]
        .map((part) => `${part.className.split(' ')[0]} ${part.scrollHeight}`)
        .join(', '),
      viewport: window.innerHeight,
      // Any scroll container inside the Bench (or clipping one) that holds more than it shows.
      inner: [bench, ...bench.querySelectorAll<HTMLElement>('*')]
        .filter((el) => {
          const overflow = getComputedStyle(el).overflowY;
          // Text for screen readers only is clipped to 1px on purpose.
          if (el.clientHeight <= 1) return false;
          return (
            (overflow === 'auto' || overflow === 'scroll' || overflow === 'hidden') &&
            el.scrollHeight > el.clientHeight + 1
          );
        })
        .map((el) => `${el.className || el.tagName} ${el.scrollHeight}>${el.clientHeight}`),
      // Any box of the step whose content spills out of it (drawn over its neighbours).
      spilling: [...bench.querySelectorAll<HTMLElement>('.fl-bench-step__body *')]
        .filter((el) => {
          if (el.closest('svg, input, textarea, select') || el.clientWidth <= 1) return false;
          return (
            el.scrollWidth > el.clientWidth + 1 ||
            (getComputedStyle(el).overflowY === 'visible' && el.scrollHeight > el.clientHeight + 1)
          );
        })
        .map(
          (el) =>
            `${el.className || el.tagName} ${el.scrollWidth}×${el.scrollHeight} in ${el.clientWidth}×${el.clientHeight}`,
        ),
    };
  });
  expect.soft(size.inner, `${step}: inner scroll containers`).toEqual([]);
  expect.soft(size.spilling, `${step}: content spilling out of its box`).toEqual([]);
  // Soft: one run reports every step that does not fit.
  expect
    .soft(`${step}: ${size.height}px tall in ${size.visibleHeight}px (${size.parts})`)
    .toBe(
      `${step}: ${Math.min(size.height, size.visibleHeight)}px tall in ${size.visibleHeight}px (${size.parts})`,
    );
  expect.soft(size.width, `${step}: width`).toBeLessThanOrEqual(size.visibleWidth);
  expect.soft(size.page, `${step}: page height`).toBeLessThanOrEqual(size.viewport);
}

const axeStep = (page: Page, step: string) => expectNoSeriousViolations(page, '.fl-bench', step);
const heading = (page: Page, title: string) =>
  page.getByRole('heading', { name: title, level: 2 }).waitFor();
const savedHere = (page: Page) =>
  page.locator('.fl-bench-save').getByText('Saved on this tablet').waitFor();
const announced = async (page: Page, text: string | RegExp) => {
  const announcer = page.getByTestId('bench-announcer');
  await announcer
    .getByText(text)
    .waitFor({ timeout: 15_000 })
    .catch(async () => {
      throw new Error(
        `The Bench announced “${await announcer.textContent()}”, not ${String(text)}`,
      );
    });
};

/** What a step looks like once charted: fits, passes axe, and a screenshot for review. */
async function checkStep(page: Page, step: string) {
  await screenshot(page, `bench-keys-${step.replaceAll(' ', '-')}`);
  await expectFits(page, step);
  await axeStep(page, step);
}

describe('the Bench by keys alone', () => {
  let desk: BrowserContext;
  let tablet: BrowserContext;
  let page: Page;
  let keyPresses = 0;
  let taps = 0;

  beforeAll(async () => {
    await seedClinic(site, [admin, clinician]);
    desk = await launchTablet();
    tablet = await launchTablet();
    const adminPage = await desk.newPage();
    await signInAdmin(adminPage, admin);
    page = await enrolClinicianTablet(adminPage, tablet, {
      name: `Key tablet ${run}`,
      site,
      clinician,
      pin: '730416',
    });
    await serviceWorkerReady(page);
  });
  afterAll(async () => {
    await desk?.close();
    await tablet?.close();
  });

  it('charts all nine steps with keys only, each step on one screen, and stores every field', async () => {
    const visitId = await startVisit(page, keyed);
    await openBench(page, visitId);
    // From here on, any pointer or touch the page receives is counted (and must stay at none).
    await page.evaluate(() => {
      const seen = { count: 0 };
      (window as unknown as { pointerSeen: typeof seen }).pointerSeen = seen;
      for (const type of ['pointerdown', 'mousedown', 'touchstart', 'wheel']) {
        window.addEventListener(
          type,
          (event) => {
            if (event.isTrusted) seen.count += 1;
          },
          true,
        );
      }
    });
    const press = async (...keys: string[]) => {
      for (const key of keys) {
        await page.keyboard.press(key);
        keyPresses += 1;
      }
    };
    const typeText = async (text: string) => {
      await page.keyboard.type(text);
      keyPresses += text.length;
    };
    const times = (n: number, key: string) => Array.from({ length: n }, () => key);

    // 1 Setup: the interpupillary distance typed, then the answers chosen by +1 (next answer).
    await press('ArrowRight');
    expect(await page.evaluate(() => document.activeElement?.id)).toBe(
      await page.getByLabel('Interpupillary distance (mm)').getAttribute('id'),
    );
    await typeText('58');
    await press('Enter');
    await press('ArrowRight', 'ArrowUp'); // own correction worn: Yes
    await announced(page, 'Own correction worn: Yes');
    await press('ArrowRight', 'ArrowRight', 'ArrowRight', 'ArrowUp'); // past both lens fields; fixing eye: Right
    await press('ArrowRight', 'ArrowUp'); // locked tube: Right tube
    await press('ArrowRight', 'ArrowUp'); // dials zeroed: Yes
    await announced(page, 'Dials zeroed: Yes');
    await savedHere(page);
    await checkStep(page, 'setup');

    // 2 Simultaneous perception.
    await press('BracketRight');
    await heading(page, 'Simultaneous perception');
    await announced(page, 'Step 2 of 9: Simultaneous perception');
    await press('ArrowRight', 'ArrowUp');
    await announced(page, 'Both pictures seen together?: Present');
    await savedHere(page);
    await checkStep(page, 'simultaneous perception');

    // 3 Subjective angle: +1 on the horizontal reading, then the vertical one +1 twice.
    await press('BracketRight');
    await heading(page, 'Subjective angle');
    await press('ArrowUp');
    await announced(page, 'Subjective horizontal angle: eso, convergent 1.0 degrees');
    await press('ArrowRight', 'ArrowUp', 'ArrowUp');
    await announced(page, /^Subjective vertical angle: R over L, right eye higher 2\.0 prism/);
    await savedHere(page);
    await checkStep(page, 'subjective angle');

    // 4 Objective angle from the keypad: +5 three times, −1 once.
    await press('BracketRight');
    await heading(page, 'Objective angle');
    await press('Numpad9', 'Numpad9', 'Numpad9', 'Numpad2');
    await page
      .getByTestId('correspondence-result')
      .getByText(/harmonious ARC · angle of anomaly 13\.0°/)
      .waitFor();
    await savedHere(page);
    await checkStep(page, 'objective angle');

    // 5 Suppression scotoma: the eye, then each side stepped out from the objective angle and
    // marked "picture lost" (L); the vertical control from zero.
    await press('BracketRight');
    await heading(page, 'Suppression scotoma');
    await press('ArrowRight', 'ArrowUp', 'ArrowUp'); // eye tested: Right eye, then Left eye
    await announced(page, 'Eye tested: Left eye');
    await press('ArrowRight', 'ArrowRight'); // past the slide field, onto the readings
    await press(...times(4, 'ArrowUp'), 'KeyL');
    await announced(page, /^Picture lost, convergent side marked at eso, convergent 18\.0 degrees/);
    await press(...times(4, 'ArrowDown'), 'KeyL');
    await announced(page, /^Picture lost, divergent side marked at eso, convergent 10\.0 degrees/);
    await press(...times(3, 'ArrowUp'), 'KeyL');
    await press(...times(2, 'ArrowUp'), 'F5'); // the clicker's F5 marks too
    await announced(page, /^Picture lost, lower marked at down 2\.0 degrees\. That was the last/);
    await page.getByRole('img', { name: /Scotoma of the left eye/ }).waitFor();
    await savedHere(page);
    await checkStep(page, 'suppression scotoma');

    // 6 Fusion.
    await press('BracketRight');
    await heading(page, 'Fusion');
    await press('ArrowRight', 'ArrowUp', 'ArrowRight', 'ArrowUp', 'ArrowRight', 'ArrowUp');
    await announced(page, 'Fusion: Present');
    await savedHere(page);
    await checkStep(page, 'fusion');

    // 7 Fusional ranges from the subjective angle (eso 1): divergence first. S turns the start
    // to exo; B marks the break and carries it to the recovery; R marks the recovery.
    await press('BracketRight');
    await heading(page, 'Fusional ranges');
    await press('KeyS', ...times(3, 'ArrowUp'), 'KeyB');
    await announced(page, /^Divergence break marked at exo, divergent 4\.0 degrees/);
    await press('ArrowDown', 'ArrowDown', 'KeyR');
    await announced(page, /^Divergence recovery marked at exo, divergent 2\.0 degrees/);
    await press(...times(7, 'Numpad9'), 'Numpad8', 'Numpad8', 'Numpad0');
    await announced(page, /^Convergence break marked at eso, convergent 38\.0 degrees/);
    await press('Numpad3', 'Numpad2', 'Numpad2', 'Numpad2', 'NumpadDecimal');
    await announced(page, /^Convergence recovery marked at eso, convergent 30\.0 degrees/);
    await page.getByTestId('proximal-convergence-note').waitFor();
    await savedHere(page);
    await checkStep(page, 'fusional ranges');

    // 8 Gross stereopsis: the patient answers what the runner says to show (T toward, A away).
    await press('BracketRight');
    await heading(page, 'Gross stereopsis');
    for (let i = 0; i < 5; i += 1) {
      const shown = (await page.getByTestId('stereo-next').textContent()) ?? '';
      await press(shown.includes('toward the patient') ? 'KeyT' : 'KeyA');
      await page
        .getByTestId('stereo-next')
        .getByText(`Trial ${i + 2}`)
        .waitFor();
    }
    await page.getByTestId('stereo-verdict').getByText('Gross stereopsis shown').waitFor();
    await announced(page, /^Trial 5: patient says .*5 of 5 right, gross stereopsis shown/);
    await savedHere(page);
    await checkStep(page, 'gross stereopsis');

    // 9 Summary.
    await press('BracketRight');
    await heading(page, 'Summary');
    await page
      .getByText(/supports and does not replace clinical judgement/)
      .first()
      .waitFor();
    const summary = (await page.locator('.fl-bench-summary').textContent()) ?? '';
    expect(summary).toContain('Interpupillary distance 58 mm');
    expect(summary).toContain('harmonious abnormal retinal correspondence');
    expect(summary).toContain('Scotoma of the left eye');
    expect(summary).toContain('Gross stereopsis shown');
    await checkStep(page, 'summary');

    // The tablet holds a Section for each step charted (its values are sealed there).
    const onTablet = await tabletSections(page, visitId);

    // "Sync now" by key; the server then holds the same fields.
    await press('KeyU');
    await announced(page, /^Sync done/);
    const onServer = await until('the Sections on the server', async () => {
      const rows = await serverSections(visitId);
      return (rows.grossStereopsis?.trials as unknown[] | undefined)?.length === 5 &&
        rows.fusionalRanges?.convergenceRecoveryDeg === 30
        ? rows
        : null;
    });
    expect(fieldByField(onServer)).toEqual(expectedLines());
    expect(Object.keys(onTablet).sort()).toEqual(Object.keys(onServer).sort());
    const trials = onServer.grossStereopsis?.trials as Array<{ correct: boolean }>;
    expect(trials.map((t) => t.correct)).toEqual([true, true, true, true, true]);

    // Leave by key; no pointer or touch reached the page after the Bench opened.
    await press('KeyQ');
    await page.waitForURL(new RegExp(`/visit/${visitId}$`));
    expect(
      await page.evaluate(
        () => (window as unknown as { pointerSeen: { count: number } }).pointerSeen.count,
      ),
    ).toBe(0);
  }, 240_000);

  it('charts the same findings by touch and prints key presses beside taps', async () => {
    expect(keyPresses).toBeGreaterThan(0);
    const visitId = await startVisit(page, tapped);
    await openBench(page, visitId);
    await recordControlShifts(page);
    const tap = async (locator: ReturnType<Page['locator']>) => {
      await locator.tap();
      taps += 1;
    };
    const tapTimes = async (n: number, locator: ReturnType<Page['locator']>) => {
      for (let i = 0; i < n; i += 1) await tap(locator);
    };
    const group = (name: string) => page.getByRole('group', { name, exact: true });
    const radio = (groupName: string, option: string) =>
      group(groupName).getByRole('radio', { name: option, exact: true });
    const step = (label: string) => page.getByRole('button', { name: label, exact: true });
    const reading = (label: string) =>
      page.getByRole('button', { name: new RegExp(`^${label}: `) });
    // "Next" names the step it opens; waiting for that name to change keeps a tap from landing
    // on a step that is still being drawn (a retried tap is counted as a tap).
    const next = async () => {
      const button = page.getByRole('button', { name: /^Next: / });
      const before = await button.getAttribute('aria-label').catch(() => null);
      const label = before ?? (await button.textContent());
      await tap(button);
      const moved = async () =>
        page
          .getByRole('button', { name: label ?? '', exact: true })
          .waitFor({ state: 'detached', timeout: 5_000 })
          .then(() => true)
          .catch(() => false);
      if (label && !(await moved())) await tap(button);
    };

    // Setup: the field tapped, 58 and Enter on the on-screen keyboard count as taps.
    await tap(page.getByLabel('Interpupillary distance (mm)'));
    await page.keyboard.type('58');
    await page.keyboard.press('Enter');
    taps += 3;
    await tap(radio('Own correction worn', 'Yes'));
    await tap(radio('Fixing eye', 'Right eye'));
    await tap(radio('Locked tube', 'Right tube'));
    await tap(radio('Dials zeroed', 'Yes'));
    await savedHere(page);
    await next();
    await tap(radio('Both pictures seen together?', 'Present'));
    await next();
    // Subjective angle: the horizontal reading is chosen already.
    await heading(page, 'Subjective angle');
    await tap(step('+1° more eso'));
    // A reading in the list is stepped by its own buttons: no tap to choose it first.
    await tapTimes(2, step('+1Δ more, Subjective vertical angle'));
    await next();
    await heading(page, 'Objective angle');
    await tapTimes(3, step('+5° more eso'));
    await tap(step('−1° less'));
    await next();
    // Scotoma: each reading starts where the measurement starts; stepping records it.
    await heading(page, 'Suppression scotoma');
    await tap(radio('Eye tested', 'Left eye'));
    await tapTimes(4, step('+1° more eso'));
    await tapTimes(4, step('−1° less, Picture lost, divergent side'));
    await tapTimes(3, step('+1° more, Picture lost, upper'));
    await tapTimes(2, step('+1° more, Picture lost, lower'));
    await page.getByRole('img', { name: /Scotoma of the left eye/ }).waitFor();
    await next();
    await heading(page, 'Fusion');
    await tap(radio('Right control mark seen', 'Seen'));
    await tap(radio('Left control mark seen', 'Seen'));
    await tap(radio('Fusion', 'Present'));
    await next();
    // Ranges: exo, then up to the break; "Break here" carries it to the recovery.
    await heading(page, 'Fusional ranges');
    await tap(page.getByRole('button', { name: 'exo, divergent' }));
    await tapTimes(3, step('+1° more exo'));
    await tap(page.getByRole('button', { name: 'Break here' }));
    await tapTimes(2, step('−1° less'));
    await tap(reading('Convergence break'));
    await tapTimes(7, step('+5° more eso'));
    await tapTimes(2, step('+1° more eso'));
    await tap(page.getByRole('button', { name: 'Break here' }));
    await tap(step('−5° less'));
    await tapTimes(3, step('−1° less'));
    await page.getByTestId('proximal-convergence-note').waitFor();
    await next();
    await heading(page, 'Gross stereopsis');
    for (let i = 0; i < 5; i += 1) {
      const shown = (await page.getByTestId('stereo-next').textContent()) ?? '';
      const word = shown.includes('toward the patient') ? 'toward' : 'away';
      await tap(page.getByRole('button', { name: `Patient says: ${word}` }));
      await page
        .getByTestId('stereo-next')
        .getByText(`Trial ${i + 2}`)
        .waitFor();
    }
    await savedHere(page);
    await next();
    await heading(page, 'Summary');

    // The tablet's values are sealed: they are compared once pushed to the server.
    const onServer = await until('the touch path’s last entries on the server', async () => {
      const rows = await serverSections(visitId);
      return rows.fusionalRanges?.convergenceRecoveryDeg === 30 ? rows : null;
    });
    const shifts = await controlShifts(page);
    expect(fieldByField(onServer)).toEqual(expectedLines());
    // No button, answer or field on the Bench moved under the finger while it was charted.
    expect(shifts).toEqual([]);

    console.log(
      [
        '',
        'Complete amblyoscope assessment on the Bench (9 steps, the same findings):',
        `  keyboard path: ${keyPresses} key presses (and no touch after opening the Bench)`,
        `  touch path:    ${taps} taps (typing on the on-screen keyboard counted as taps)`,
        '',
      ].join('\n'),
    );
    expect(taps).toBeGreaterThan(0);
  }, 240_000);

  it('fits the fusional ranges step on one screen with every range recorded, caution in view', async () => {
    const visitId = await startVisit(page, full);
    await gotoOnTablet(page, `${baseUrl()}/bench/${visitId}?step=fusional-ranges`);
    await heading(page, 'Fusional ranges');
    // No subjective angle recorded: the amplitudes are read from 0° and a note says so.
    const readings: Array<[string, string]> = [
      ['Divergence break', '-6'],
      ['Divergence recovery', '-4'],
      ['Convergence break', '28'],
      ['Convergence recovery', '20'],
      ['Right-up vertical break', '3'],
      ['Right-up vertical recovery', '1'],
      ['Left-up vertical break', '-3'],
      ['Left-up vertical recovery', '-1'],
      ['Incyclo break', '-8'],
      ['Incyclo recovery', '-5'],
      ['Excyclo break', '8'],
      ['Excyclo recovery', '5'],
    ];
    for (const [label, text] of readings) {
      await page.getByRole('button', { name: new RegExp(`^${label}: `) }).tap();
      const box = page.getByRole('textbox', { name: `Type ${label}`, exact: true });
      await box.fill(text);
      await box.press('Enter');
    }
    const result = page.getByTestId('ranges-result');
    await result.getByRole('rowheader', { name: 'cyclo total' }).waitFor();
    await savedHere(page);
    expect(
      await result.getByRole('row').evaluateAll((rows) => rows.map((row) => row.textContent)),
    ).toEqual([
      'Range (distance)BreakRecovery',
      'divergence6.0° · within 4–6° (memory)4.0° · no norm',
      'convergence28.0° · within 25–30° (teaching source)20.0° · no norm',
      'right up3.0Δ · within 2–4Δ (memory)1.0Δ · no norm',
      'left up3.0Δ · within 2–4Δ (memory)1.0Δ · no norm',
      'incyclo8.0° · no norm5.0° · no norm',
      'excyclo8.0° · no norm5.0° · no norm',
      'vertical total6.0Δ · no norm—',
      'cyclo total16.0° · within 15–25° (memory)—',
    ]);
    await page
      .getByText(/^No subjective angle is recorded, so these amplitudes are read from 0°/)
      .waitFor();
    await screenshot(page, 'bench-keys-fusional-ranges-every-range');
    await expectFits(page, 'fusional ranges, every range');
    // The caution is on screen in full, not cut off at the foot of the panel.
    const caution = await result.getByRole('note').boundingBox();
    const panel = await result.boundingBox();
    if (!caution || !panel) throw new Error('The ranges result or its caution is not drawn');
    expect(await result.getByRole('note').textContent()).toMatch(
      /supports and does not replace clinical judgement/,
    );
    expect(caution.y + caution.height).toBeLessThanOrEqual(panel.y + panel.height);
    expect(panel.y + panel.height).toBeLessThanOrEqual(800);
    await axeStep(page, 'fusional ranges, every range');
  }, 240_000);
});
