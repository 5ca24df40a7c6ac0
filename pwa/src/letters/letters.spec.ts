import { PDFDocument } from 'pdf-lib';
import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import {
  exampleLetterInput,
  exampleLetterRecords,
  exampleVisits,
  letterLayoutOf,
  letterPlainText,
  type CollectionName,
  type VisitFindings,
} from '@fuselight/shared';
import { renderLetterPdf } from '@fuselight/shared/letter-pdf';
import { pdfText } from '@fuselight/shared/pdf-text-testing';
import { v7 as uuidv7 } from 'uuid';
import { FuselightDb } from '../data/db';
import { OutboxRepository } from '../data/outbox-repository';
import { RecordsRepository, type EditContext } from '../data/records-repository';
import {
  deliveryWords,
  draftLetter,
  editLetter,
  finaliseLetter,
  LetterRuleError,
  requestSend,
} from './letter-actions';
import { LETTER_FONT_URLS, letterFonts } from './letter-fonts';
import { layoutOfLetter, letterPdfOnTablet, type LetterContext } from './letter-sources';

const SITE = exampleVisits.first.visit.id.replace(/b0001$/, 'a0009');
const CLINICIAN = '01935a00-0000-7000-8000-000000000103';
let db: FuselightDb;
let records: RecordsRepository;
let outbox: OutboxRepository;
let now = Date.parse('2026-12-01T15:00:00.000Z');
const ctx = (): EditContext => ({
  authorId: CLINICIAN,
  deviceId: 'tablet-1',
  nowMs: (now += 1000),
});
const context: LetterContext = {
  clinic: exampleLetterInput.clinic,
  clinician: exampleLetterInput.clinician,
  today: '2026-12-01',
};

/** Who asked for which address: the tablet fetches the font files when it first draws a letter. */
const fetched: string[] = [];
const FONTS_DIR = resolve(import.meta.dirname, '../../../shared/src/letters/fonts');

beforeEach(() => {
  // The build serves the font files as assets; here they are read from the repository.
  vi.stubGlobal('fetch', async (url: string) => {
    fetched.push(url);
    const file = url.split('/').at(-1)!.split('?')[0]!;
    return new Response(readFileSync(resolve(FONTS_DIR, file)));
  });
  db = new FuselightDb(`letters-${crypto.randomUUID()}`);
  records = new RecordsRepository(db);
  outbox = new OutboxRepository(db);
});
afterEach(async () => {
  vi.unstubAllGlobals();
  db.close();
  await db.delete();
});

/** The invented example patient's three visits, charted on this tablet. */
async function chartExample(): Promise<{ visitId: string; patientId: string }> {
  const p = exampleLetterInput.patient;
  const patientId = await records.create(
    'patient',
    {
      siteId: SITE,
      givenName: p.givenName,
      familyName: p.familyName,
      dateOfBirth: p.dateOfBirth,
      clinicNumber: p.clinicNumber,
      referrer: p.referrer,
    },
    ctx(),
  );
  let visitId = '';
  for (const findings of [
    exampleVisits.first,
    exampleVisits.second,
    exampleVisits.third,
  ] as VisitFindings[]) {
    visitId = await records.create(
      'visit',
      {
        siteId: SITE,
        patientId,
        date: findings.visit.date,
        clinicianId: CLINICIAN,
        status: 'signed',
        reason: findings.visit.reason,
      },
      ctx(),
    );
    for (const [collection, section] of Object.entries(findings)) {
      if (collection === 'visit' || !section) continue;
      const clean = Object.fromEntries(Object.entries(section).filter(([, v]) => v !== undefined));
      await records.create(
        collection as 'plan',
        { ...(clean as object), siteId: SITE, patientId, visitId } as never,
        ctx(),
      );
    }
  }
  return { visitId, patientId };
}

describe('letters on the tablet', () => {
  it('builds the letter offline from the records in IndexedDB, with the previous visit and the trend', async () => {
    const { visitId } = await chartExample();
    const visit = (await records.get('visit', visitId))!;
    const letterId = await draftLetter(
      records,
      visit,
      'referrer',
      exampleLetterInput.patient.referrer,
      ctx(),
    );
    const text = letterPlainText(await layoutOfLetter(records, letterId, context));
    expect(text).toContain(
      'Objective angle (amblyoscope): exo 8.0° (14.1Δ) (previously exo 11.0° (19.4Δ))',
    );
    expect(text).toContain('12 May 2026: exo 14.0° (24.9Δ)');
    expect(text).toContain('Follow-up in 8 weeks.');
    expect(text).toContain('Draft — not yet finalised');
  });

  it('renders the PDF on the tablet with Lato embedded', async () => {
    const { visitId } = await chartExample();
    const letterId = await draftLetter(
      records,
      (await records.get('visit', visitId))!,
      'referrer',
      null,
      ctx(),
    );
    const bytes = await letterPdfOnTablet(records, letterId, context);
    const doc = await PDFDocument.load(bytes);
    expect(doc.getPageCount()).toBeGreaterThanOrEqual(1);
    expect(doc.getTitle()).toBe('Orthoptic assessment of Tamsin Orrery, 1 December 2026');
    expect(Buffer.from(bytes).toString('latin1')).toMatch(/\/BaseFont \/Lato-Regular-\d+/);
    // The fonts are files of their own, fetched when a letter is first drawn (once per page).
    expect(new Set(fetched)).toEqual(new Set([LETTER_FONT_URLS.regular, LETTER_FONT_URLS.bold]));
    expect(LETTER_FONT_URLS.regular).toMatch(/Lato-Regular[^/]*\.ttf/);
  });

  it('says what to do when a font file cannot be fetched, and fetches it again next time', async () => {
    let calls = 0;
    const failing = async (url: string) => {
      calls += 1;
      throw new Error(`offline: ${url}`);
    };
    vi.resetModules();
    const fresh = await import('./letter-fonts');
    await expect(fresh.letterFonts(failing)).rejects.toThrow(/^offline: /);
    const bytes = new Uint8Array([1, 2, 3]);
    const fonts = await fresh.letterFonts(async () => bytes);
    expect(fonts).toEqual({ regular: bytes, bold: bytes });
    expect(calls).toBe(2);

    vi.resetModules();
    const again = await import('./letter-fonts');
    vi.stubGlobal('fetch', async () => new Response('gone', { status: 404 }));
    await expect(again.letterFonts()).rejects.toThrow(
      /^The letter font could not be loaded \(404 for .*Lato-Regular.*\); reload the app while connected and try again$/,
    );
  });

  it('renders the exercise handout from the prescribed exercises', async () => {
    const { visitId } = await chartExample();
    const letterId = await draftLetter(
      records,
      (await records.get('visit', visitId))!,
      'handout',
      null,
      ctx(),
    );
    const text = letterPlainText(await layoutOfLetter(records, letterId, context));
    expect(text).toContain('Dot card convergence, 5 minutes twice a day');
    expect(text).toMatch(
      /Stop the exercises and contact the clinic for advice if your symptoms get worse/,
    );
  });

  it('never changes a final letter, and queues a send request in the Outbox', async () => {
    const { visitId } = await chartExample();
    const letterId = await draftLetter(
      records,
      (await records.get('visit', visitId))!,
      'referrer',
      exampleLetterInput.patient.referrer,
      ctx(),
    );
    await editLetter(records, letterId, { opening: 'Dear Dr Whitcombe,' }, ctx());
    await expect(requestSend(records, letterId, { copyToPatient: false }, ctx())).rejects.toThrow(
      /only once it is final/,
    );
    await finaliseLetter(records, letterId, ctx());
    const error = await editLetter(records, letterId, { opening: 'changed' }, ctx()).catch(
      (e: unknown) => e,
    );
    expect(error).toBeInstanceOf(LetterRuleError);
    expect((error as LetterRuleError).field).toBe('opening');
    expect((await records.get('letter', letterId))!.fields.opening).toBe('Dear Dr Whitcombe,');

    await requestSend(records, letterId, { copyToPatient: true }, ctx());
    const letter = (await records.get('letter', letterId))!;
    expect(letter.fields).toMatchObject({
      status: 'final',
      deliveryState: 'queued',
      copyToPatient: true,
    });
    expect(deliveryWords(letter.fields)).toBe('Queued to send');
    const pending = await outbox.listEntries();
    expect(
      pending.some((entry) => entry.recordId === letterId && 'sendRequestedAt' in entry.fields),
    ).toBe(true);
  });

  it('words the delivery states the server writes back', () => {
    expect(
      deliveryWords({ status: 'final', deliveryState: 'sent', sentAt: '2026-12-01T16:00:00.000Z' }),
    ).toBe('Sent 2026-12-01');
    expect(
      deliveryWords({
        status: 'final',
        deliveryState: 'failed',
        deliveryError: 'no referrer e-mail address',
      }),
    ).toBe('Not sent: no referrer e-mail address');
  });

  it('shows the letter the server mails: the shared model of the same records, and its PDF text', async () => {
    // The same invented records the server's mail test pushes (shared letter-records fixture),
    // with rival Section records and an earlier app's Addendum kept as a plan beside the real ones.
    const fixture = exampleLetterRecords({
      siteId: SITE,
      patientId: uuidv7(),
      visitIds: [uuidv7(), uuidv7(), uuidv7()],
      letterId: uuidv7(),
      clinicianId: CLINICIAN,
      newId: uuidv7,
    });
    for (const record of fixture.all) {
      await records.create(record.collection as CollectionName, record.fields as never, ctx(), {
        id: record.id,
      });
    }
    const model = letterLayoutOf(fixture.records, context);
    const layout = await layoutOfLetter(records, fixture.records.letter.id, context);
    expect(layout).toEqual(model);
    expect(letterPlainText(layout)).toContain('exo 8.0° (14.1Δ) (previously exo 11.0° (19.4Δ))');

    const onTablet = await pdfText(
      await letterPdfOnTablet(records, fixture.records.letter.id, context),
    );
    const ofModel = await pdfText(await renderLetterPdf(model, await letterFonts()));
    expect(onTablet.all).toBe(ofModel.all);
    expect(onTablet.all).toContain('Harbourside Eye Clinic');
    expect(onTablet.all).not.toMatch(/exo (30|25|40)\.0°/);
  });
});
