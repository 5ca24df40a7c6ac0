// Builds a visit's letter on the tablet from the records in IndexedDB (offline): the letter, its
// visit and patient, the patient's visits and their Section records, read through the records
// repository; which of them feed the letter, and its date, is the shared rule (letterLayoutOf)
// the server applies to the letter it mails.
import {
  earlierVisitsOf,
  LETTER_SECTION_COLLECTIONS,
  letterLayoutOf,
  type ClinicDetails,
  type ClinicianDetails,
  type LetterLayout,
} from '@fuselight/shared';
import type { LocalRecord, RecordsRepository } from '../data';

export class LetterSourceError extends Error {
  override readonly name = 'LetterSourceError';
}

export interface LetterContext {
  clinic: ClinicDetails;
  clinician: ClinicianDetails;
  /** Today on the tablet, YYYY-MM-DD (used for a draft; a final letter keeps its own date). */
  today: string;
}

export async function layoutOfLetter(
  records: RecordsRepository,
  letterId: string,
  context: LetterContext,
): Promise<LetterLayout> {
  const letter = await records.get('letter', letterId);
  if (!letter) throw new LetterSourceError(`There is no letter ${letterId} on this tablet`);
  const visit = await records.get('visit', letter.fields.visitId);
  const patient = await records.get('patient', letter.fields.patientId);
  if (!visit || !patient)
    throw new LetterSourceError("This letter's visit or patient is not on this tablet");
  const patientVisits = await records.listByField('visit', 'patientId', patient.id);
  const sections: LocalRecord[] = [];
  for (const v of [visit, ...earlierVisitsOf(visit, patientVisits)]) {
    for (const collection of LETTER_SECTION_COLLECTIONS) {
      sections.push(...(await records.listByField(collection, 'visitId', v.id)));
    }
  }
  return letterLayoutOf({ letter, visit, patient, patientVisits, sections }, context);
}

/**
 * The letter as PDF bytes, drawn on the tablet. The renderer (pdf-lib with fontkit) and the font
 * files load only now, when a letter is first drawn.
 */
export async function letterPdfOnTablet(
  records: RecordsRepository,
  letterId: string,
  context: LetterContext,
): Promise<Uint8Array> {
  const layout = await layoutOfLetter(records, letterId, context);
  const [{ renderLetterPdf }, { letterFonts }] = await Promise.all([
    import('@fuselight/shared/letter-pdf'),
    import('./letter-fonts'),
  ]);
  return renderLetterPdf(layout, await letterFonts());
}
