import { describe, expect, it } from 'vitest';
import {
  buildClinicLetter,
  buildExerciseHandout,
  CLINICAL_CAUTION,
  exampleLetterInput,
  exampleVisits,
  INTERPRETATION_LABEL,
  STOP_AND_ASK_ADVICE,
} from '@fuselight/shared';
import { letterFonts } from './letter-fonts';
import { renderLetterPdf } from '@fuselight/shared/letter-pdf';
import { pdfText } from './pdf-text.testing';

/** pdfjs splits runs where pdf-lib drew separate strings; compare with spaces squeezed. */
const squeeze = (text: string) => text.replace(/\s+/g, ' ');

describe('renderLetterPdf (server)', () => {
  it('renders the clinic letter with letterhead, identifiers, both units, comparison and caution', async () => {
    const bytes = await renderLetterPdf(buildClinicLetter(exampleLetterInput), letterFonts());
    expect(Buffer.from(bytes.slice(0, 5)).toString('latin1')).toBe('%PDF-');
    const text = squeeze((await pdfText(bytes)).all);
    expect(text).toContain('Harbourside Eye Clinic');
    expect(text).toContain('14 Quay Street');
    expect(text).toContain('Tamsin Orrery');
    expect(text).toContain('HB-20417');
    expect(text).toContain('9 March 2016');
    // Both units through Lato's Δ glyph: 8° = 14.1Δ, previous 11° = 19.4Δ (Δ = 100·tan θ).
    expect(text).toContain('exo 8.0° (14.1Δ)');
    expect(text).toContain('exo 11.0° (19.4Δ)');
    expect(text).toContain('Previous visit (18 Aug 2026)');
    expect(text).toContain(squeeze(INTERPRETATION_LABEL).slice(0, 40));
    expect(text).toContain('Follow-up in 8 weeks.');
    expect(text).toContain('Wren Ashdown');
    expect(text).toContain('Finalised 1 December 2026');
    // The caution wraps over two lines in the footer; every word is there, in order.
    expect(text).toContain('Fuselight supports and does not replace clinical judgement;');
    expect(text).toContain('follow local protocols and licensed practice.');
    expect(CLINICAL_CAUTION).toContain('licensed practice');
    expect(text).not.toContain('DRAFT');
  });

  it('embeds Lato rather than a standard PDF font', async () => {
    const bytes = await renderLetterPdf(buildClinicLetter(exampleLetterInput), letterFonts());
    const raw = Buffer.from(bytes).toString('latin1');
    expect(raw).toMatch(/\/BaseFont \/Lato-Regular-\d+/);
    expect(raw).toMatch(/\/BaseFont \/Lato-Bold-\d+/);
    expect(raw).toContain('/FontFile2');
    expect(raw).not.toContain('/Helvetica');
  });

  it('marks a draft letter as a draft on the page', async () => {
    const layout = buildClinicLetter({
      ...exampleLetterInput,
      letter: { kind: 'referrer', status: 'draft' },
    });
    const text = (await pdfText(await renderLetterPdf(layout, letterFonts()))).all;
    expect(text).toContain('DRAFT');
    expect(text).toContain('Draft — not yet finalised');
  });

  it('renders the exercise handout with the advice to stop if symptoms worsen', async () => {
    const layout = buildExerciseHandout({
      clinic: exampleLetterInput.clinic,
      patient: exampleLetterInput.patient,
      letter: { kind: 'handout', status: 'final', finalisedAt: '2026-12-01T15:20:00.000Z' },
      visit: exampleVisits.third.visit,
      plan: exampleVisits.third.plan,
      clinician: exampleLetterInput.clinician,
      issuedOn: '2026-12-01',
    });
    const text = squeeze((await pdfText(await renderLetterPdf(layout, letterFonts()))).all);
    expect(text).toContain('Exercise handout');
    expect(text).toContain('Jump convergence with a pen, 10 times each evening');
    expect(text).toContain(squeeze(STOP_AND_ASK_ADVICE).slice(0, 60));
    expect(text).toContain('licensed practice');
  });

  it('carries a long letter over several pages, each with the caution', async () => {
    const long = 'The family report more comfortable reading since the last visit. '.repeat(60);
    const layout = buildClinicLetter({
      ...exampleLetterInput,
      letter: { ...exampleLetterInput.letter, findingsText: long },
    });
    const { pages } = await pdfText(await renderLetterPdf(layout, letterFonts()));
    expect(pages.length).toBeGreaterThan(1);
    for (const page of pages) expect(squeeze(page)).toContain('licensed practice');
    expect(squeeze(pages.at(-1)!)).toContain(`Page ${pages.length} of ${pages.length}`);
  });
});
