// Builds a visit's letter on the tablet from the records in IndexedDB (offline): the letter, its
// visit and patient, the sections of this and earlier visits, through the records repository.
import {
  buildClinicLetter,
  buildExerciseHandout,
  type ClinicDetails,
  type ClinicianDetails,
  type CollectionName,
  type LetterLayout,
  type VisitFindings,
} from '@fuselight/shared';
import type { LocalRecord, RecordsRepository } from '../data';

const LETTER_SECTIONS = [
  'visualAcuity',
  'coverTest',
  'prismCoverTest',
  'simultaneousPerception',
  'amblyoscopeAngles',
  'fusion',
  'fusionalRanges',
  'nearPointConvergence',
  'stereoacuity',
  'plan',
] as const satisfies readonly CollectionName[];

export class LetterSourceError extends Error {
  override readonly name = 'LetterSourceError';
}

export interface LetterContext {
  clinic: ClinicDetails;
  clinician: ClinicianDetails;
  /** Today on the tablet, YYYY-MM-DD (used for a draft; a final letter keeps its own date). */
  today: string;
}

async function findingsOf(
  records: RecordsRepository,
  visit: LocalRecord<'visit'>,
): Promise<VisitFindings> {
  const findings: VisitFindings = {
    visit: { id: visit.id, date: visit.fields.date, reason: visit.fields.reason ?? null },
  };
  for (const collection of LETTER_SECTIONS) {
    const [section] = await records.listByField(collection, 'visitId', visit.id);
    if (section) (findings as unknown as Record<string, unknown>)[collection] = section.fields;
  }
  return findings;
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
  const visits = (await records.listByField('visit', 'patientId', patient.id)).filter(
    (v) => v.fields.date <= visit.fields.date && v.id !== visit.id,
  );
  const current = await findingsOf(records, visit);
  const earlier = await Promise.all(visits.map((v) => findingsOf(records, v)));
  const common = {
    clinic: context.clinic,
    patient: patient.fields,
    letter: { ...letter.fields, id: letter.id },
    clinician: context.clinician,
    issuedOn: letter.fields.finalisedAt?.slice(0, 10) ?? context.today,
  };
  return letter.fields.kind === 'handout'
    ? buildExerciseHandout({ ...common, visit: current.visit, plan: current.plan })
    : buildClinicLetter({ ...common, current, earlier });
}

/** The letter as PDF bytes, drawn on the tablet (the renderer loads with its fonts on demand). */
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
  return renderLetterPdf(layout, letterFonts());
}
