// The clinic letter as the tablet draws it (pwa/src/letters, the code that runs offline), opened
// in Debian's Chromium: page one is rendered with pdf.js onto a canvas and saved as a screenshot
// artifact, and the text pdf.js reads from the page is checked for units and the caution.
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  buildClinicLetter,
  buildExerciseHandout,
  exampleLetterInput,
  exampleVisits,
} from '@fuselight/shared';
import type { BrowserContext } from 'playwright-core';
import { resolve } from 'node:path';
import { letterFonts } from '../src/letters/letter-fonts';
import { renderLetterPdf } from '@fuselight/shared/letter-pdf';
import { launchTablet, screenshot } from './support/browser';

const require = createRequire(import.meta.url);
const ORIGIN = 'http://letters.fuselight.invalid';

const viewerPage = `<!doctype html><html><body style="margin:0;background:#6b7478">
<canvas id="page"></canvas><pre id="text" hidden></pre>
<script type="module">
import * as pdfjs from '/pdf.mjs';
pdfjs.GlobalWorkerOptions.workerSrc = '/pdf.worker.mjs';
const name = new URL(location.href).searchParams.get('pdf');
const doc = await pdfjs.getDocument('/' + name).promise;
const page = await doc.getPage(1);
const viewport = page.getViewport({ scale: 1.4 });
const canvas = document.getElementById('page');
canvas.width = viewport.width;
canvas.height = viewport.height;
await page.render({ canvasContext: canvas.getContext('2d'), viewport }).promise;
const content = await page.getTextContent();
document.getElementById('text').textContent = content.items.map((i) => i.str).join(' ');
document.body.dataset.rendered = String(doc.numPages);
</script></body></html>`;

describe('letters in Chromium', () => {
  let browser: BrowserContext;
  // The app fetches its font files from the server; here they are read from the repository.
  const fontFromRepository = async (url: string) =>
    new Uint8Array(
      readFileSync(
        resolve(
          import.meta.dirname,
          '../../shared/src/letters/fonts',
          url.split('/').at(-1)!.split('?')[0]!,
        ),
      ),
    );
  const pdfs = new Map<string, Uint8Array>();

  beforeAll(async () => {
    pdfs.set(
      'letter.pdf',
      await renderLetterPdf(
        buildClinicLetter(exampleLetterInput),
        await letterFonts(fontFromRepository),
      ),
    );
    pdfs.set(
      'handout.pdf',
      await renderLetterPdf(
        buildExerciseHandout({
          clinic: exampleLetterInput.clinic,
          patient: exampleLetterInput.patient,
          letter: { kind: 'handout', status: 'final', finalisedAt: '2026-12-01T15:20:00.000Z' },
          visit: exampleVisits.third.visit,
          plan: exampleVisits.third.plan,
          clinician: exampleLetterInput.clinician,
          issuedOn: '2026-12-01',
        }),
        await letterFonts(fontFromRepository),
      ),
    );
    browser = await launchTablet({ width: 900, height: 1200 });
    const pdfjs = readFileSync(require.resolve('pdfjs-dist/legacy/build/pdf.min.mjs'));
    const worker = readFileSync(require.resolve('pdfjs-dist/legacy/build/pdf.worker.min.mjs'));
    // Everything is served from memory: the browser reaches no network.
    await browser.route(`${ORIGIN}/**`, (route) => {
      const path = new URL(route.request().url()).pathname.slice(1);
      if (path === 'pdf.mjs') return route.fulfill({ body: pdfjs, contentType: 'text/javascript' });
      if (path === 'pdf.worker.mjs')
        return route.fulfill({ body: worker, contentType: 'text/javascript' });
      const pdf = pdfs.get(path);
      if (pdf) return route.fulfill({ body: Buffer.from(pdf), contentType: 'application/pdf' });
      return route.fulfill({ body: viewerPage, contentType: 'text/html' });
    });
  });
  afterAll(async () => {
    await browser?.close();
  });

  async function open(name: string) {
    const page = await browser.newPage();
    await page.goto(`${ORIGIN}/view.html?pdf=${name}`);
    await page.waitForSelector('body[data-rendered]', { timeout: 30_000 });
    const text = ((await page.locator('#text').textContent()) ?? '').replace(/\s+/g, ' ');
    return { page, text };
  }

  it('shows page one of the clinic letter with both units and the caution', async () => {
    const { page, text } = await open('letter.pdf');
    expect(text).toContain('Harbourside Eye Clinic');
    expect(text).toContain('exo 8.0° (14.1Δ)');
    expect(text).toContain('Computed interpretation');
    expect(text).toContain('licensed practice');
    const path = await screenshot(page, 'letter-page-1');
    expect(readFileSync(path).length).toBeGreaterThan(10_000);
    await page.close();
  });

  it('shows the exercise handout with the advice to stop if symptoms worsen', async () => {
    const { page, text } = await open('handout.pdf');
    expect(text).toContain('Your exercises');
    expect(text).toContain('Stop the exercises and contact the clinic for advice');
    await screenshot(page, 'handout-page-1');
    await page.close();
  });
});
