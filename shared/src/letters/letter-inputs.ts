// Which records feed a letter, one rule for the tablet (its preview, drawn offline) and the server
// (the PDF it mails): given the letter, its visit and patient, the patient's visits and the
// Section records placed on them, this picks each visit's Section the way the Visit screen does
// (the record with the derived id, else the lowest id; never a deleted record or an earlier
// app's Addendum kept as a plan), the earlier visits to compare with, and the letter's date. Pure:
// the caller reads the records and gives today's date.
import type { PatientFields } from '../schemas/patient.schema';
import type { RecordFields } from '../schemas/registry';
import { pickSectionRecord } from '../schemas/section-records';
import {
  buildClinicLetter,
  type ClinicDetails,
  type ClinicianDetails,
  type ClinicLetterInput,
  type LetterRecordFields,
} from './build-letter';
import { buildExerciseHandout, type ExerciseHandoutInput } from './build-handout';
import type { LetterLayout } from './letter-layout';
import type { LetterSectionName, VisitFindings } from './visit-findings';

/** The Section collections a letter reads, in the order of `VisitFindings`. */
export const LETTER_SECTION_COLLECTIONS = [
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
] as const satisfies readonly LetterSectionName[];

/** A synced record as either end holds it; only these parts are read. */
export interface LetterSourceRecord {
  id: string;
  collection: string;
  deleted?: boolean;
  fields: object;
}

export interface LetterRecords {
  letter: LetterSourceRecord;
  visit: LetterSourceRecord;
  patient: LetterSourceRecord;
  /** The patient's visit records in any order (the letter's own visit may be among them). */
  patientVisits: readonly LetterSourceRecord[];
  /** Records of the letter's Section collections placed on those visits, in any order. */
  sections: readonly LetterSourceRecord[];
}

export interface LetterSourceContext {
  clinic: ClinicDetails;
  clinician: ClinicianDetails;
  /** Today's date (YYYY-MM-DD) where the letter is drawn; the date of a letter not yet final. */
  today: string;
}

export type LetterInputs =
  { kind: 'referrer'; input: ClinicLetterInput } | { kind: 'handout'; input: ExerciseHandoutInput };

type VisitFields = Pick<RecordFields<'visit'>, 'date'> & { reason?: string | null };

/** The date a letter carries: the day it was finalised, or `today` until it is. */
export function letterIssuedOn(letter: LetterRecordFields, today: string): string {
  return letter.finalisedAt?.slice(0, 10) ?? today;
}

/** One visit's findings from Section records (any collections, any visits, in any order). */
export function visitFindingsOf(
  visit: LetterSourceRecord,
  sections: readonly LetterSourceRecord[],
): VisitFindings {
  const fields = visit.fields as VisitFields;
  const findings: VisitFindings = {
    visit: { id: visit.id, date: fields.date, reason: fields.reason ?? null },
  };
  for (const collection of LETTER_SECTION_COLLECTIONS) {
    const placed = sections.filter(
      (record) =>
        record.collection === collection &&
        (record.fields as { visitId?: unknown }).visitId === visit.id,
    );
    const chosen = pickSectionRecord(visit.id, collection, placed);
    if (chosen) (findings as unknown as Record<string, unknown>)[collection] = chosen.fields;
  }
  return findings;
}

/** The patient's other live visits on or before the letter's visit, oldest first. */
export function earlierVisitsOf(
  visit: LetterSourceRecord,
  patientVisits: readonly LetterSourceRecord[],
): LetterSourceRecord[] {
  const date = (visit.fields as VisitFields).date;
  return patientVisits
    .filter(
      (v) => v.deleted !== true && v.id !== visit.id && (v.fields as VisitFields).date <= date,
    )
    .sort((a, b) => {
      const da = (a.fields as VisitFields).date;
      const db = (b.fields as VisitFields).date;
      return da < db ? -1 : da > db ? 1 : a.id < b.id ? -1 : a.id > b.id ? 1 : 0;
    });
}

/** What the letter's builder is given, from the records that feed it. */
export function letterInputsOf(records: LetterRecords, context: LetterSourceContext): LetterInputs {
  const letter: LetterRecordFields = {
    ...(records.letter.fields as LetterRecordFields),
    id: records.letter.id,
  };
  const current = visitFindingsOf(records.visit, records.sections);
  const common = {
    clinic: context.clinic,
    patient: records.patient.fields as PatientFields,
    letter,
    clinician: context.clinician,
    issuedOn: letterIssuedOn(letter, context.today),
  };
  if (letter.kind === 'handout') {
    return {
      kind: 'handout',
      input: { ...common, visit: current.visit, plan: current.plan },
    };
  }
  const earlier = earlierVisitsOf(records.visit, records.patientVisits).map((v) =>
    visitFindingsOf(v, records.sections),
  );
  return { kind: 'referrer', input: { ...common, current, earlier } };
}

/** The letter's layout from its records: what both ends draw as a PDF. */
export function letterLayoutOf(records: LetterRecords, context: LetterSourceContext): LetterLayout {
  const inputs = letterInputsOf(records, context);
  return inputs.kind === 'handout'
    ? buildExerciseHandout(inputs.input)
    : buildClinicLetter(inputs.input);
}
