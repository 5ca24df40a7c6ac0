// Builds the clinic letter for a visit from its records: letterhead, identifiers, findings beside
// the previous visit, computed interpretations under their support-for-judgement label, a trend of
// the deviation across visits, the plan and follow-up, and the signature block. Free text the
// clinician wrote on the letter record (opening, findings note, plan note, closing) is used as is.
import { CLINICAL_CAUTION } from '../clinical/caution';
import { describeDeviation } from '../clinical/deviation';
import type { PatientFields } from '../schemas/patient.schema';
import { managementWords } from '../schemas/plan.schema';
import type { RecordFields } from '../schemas/registry';
import { longDate, shortDate } from './dates';
import {
  INTERPRETATION_LABEL,
  type FindingRow,
  type LetterBlock,
  type LetterLayout,
  type Letterhead,
  type TrendPoint,
} from './letter-layout';
import { findingLines, letterInterpretations, type VisitFindings } from './visit-findings';

export interface ClinicDetails {
  name: string;
  /** As kept in the site settings: lines separated by newlines or commas. */
  address: string | null;
}

export interface ClinicianDetails {
  name: string;
  /** e.g. "Orthoptist". */
  role: string;
}

export type LetterRecordFields = Partial<RecordFields<'letter'>> & { id?: string };

export interface ClinicLetterInput {
  clinic: ClinicDetails;
  patient: Pick<
    PatientFields,
    'givenName' | 'familyName' | 'dateOfBirth' | 'clinicNumber' | 'referrer'
  >;
  letter: LetterRecordFields;
  current: VisitFindings;
  /** Earlier visits of the same patient in any order; the latest is the comparison column. */
  earlier?: readonly VisitFindings[];
  clinician: ClinicianDetails;
  /** The letter's date (YYYY-MM-DD), given by the caller: shared code reads no clock. */
  issuedOn: string;
}

export function letterheadOf(clinic: ClinicDetails): Letterhead {
  const addressLines = (clinic.address ?? '')
    .split(/\n|,/)
    .map((line) => line.trim())
    .filter((line) => line.length > 0);
  return { clinicName: clinic.name, addressLines };
}

export function patientName(patient: Pick<PatientFields, 'givenName' | 'familyName'>): string {
  return `${patient.givenName} ${patient.familyName}`;
}

function identifiersOf(patient: ClinicLetterInput['patient']) {
  return [
    { label: 'Patient', value: patientName(patient) },
    { label: 'Date of birth', value: longDate(patient.dateOfBirth, 'patient.dateOfBirth') },
    { label: 'Clinic number', value: patient.clinicNumber },
  ];
}

function byDate(a: VisitFindings, b: VisitFindings): number {
  return a.visit.date < b.visit.date ? -1 : a.visit.date > b.visit.date ? 1 : 0;
}

/** The comparison table: every finding recorded at either visit, this visit first. */
export function comparisonRows(
  current: VisitFindings,
  previous: VisitFindings | null,
): FindingRow[] {
  const now = findingLines(current);
  const before = previous ? findingLines(previous) : [];
  const rows: FindingRow[] = now.map((line) => ({
    label: line.label,
    current: line.text,
    previous: previous ? (before.find((b) => b.key === line.key)?.text ?? 'not recorded') : null,
  }));
  for (const line of before) {
    if (!now.some((n) => n.key === line.key)) {
      rows.push({ label: line.label, current: 'not recorded', previous: line.text });
    }
  }
  return rows;
}

interface TrendChoice {
  title: string;
  unit: string;
  pick: (visit: VisitFindings) => number | null | undefined;
  words: (value: number) => string;
}

const TREND_CHOICES: TrendChoice[] = [
  {
    title: 'Objective angle at the amblyoscope, by visit (+ eso, − exo)',
    unit: '°',
    pick: (v) => v.amblyoscopeAngles?.objectiveHorizontalDeg,
    words: (value) => describeDeviation({ horizontalDeg: value }).summary,
  },
  {
    title: 'Fusional convergence break, by visit',
    unit: '°',
    pick: (v) => v.fusionalRanges?.convergenceBreakDeg,
    words: (value) => describeDeviation({ horizontalDeg: value }).summary.replace('eso ', ''),
  },
  {
    title: 'Near point of convergence break, by visit',
    unit: 'cm',
    pick: (v) => v.nearPointConvergence?.breakCm,
    words: (value) => `${value} cm`,
  },
];

/** The first finding recorded at two or more visits becomes the trend chart. */
export function trendOf(visits: readonly VisitFindings[]): LetterBlock | null {
  const ordered = [...visits].sort(byDate);
  for (const choice of TREND_CHOICES) {
    const points: TrendPoint[] = [];
    for (const visit of ordered) {
      const value = choice.pick(visit);
      if (typeof value === 'number' && Number.isFinite(value)) {
        points.push({ label: shortDate(visit.visit.date), value, valueText: choice.words(value) });
      }
    }
    if (points.length >= 2)
      return { type: 'trend', title: choice.title, unit: choice.unit, points };
  }
  return null;
}

function planBlocks(
  plan: VisitFindings['plan'],
  planText: string | null | undefined,
): LetterBlock[] {
  const blocks: LetterBlock[] = [{ type: 'heading', text: 'Plan and follow-up' }];
  if (plan?.impression) blocks.push({ type: 'paragraph', text: `Impression: ${plan.impression}` });
  const items: string[] = [];
  if (plan?.management && plan.management.length > 0) {
    items.push(`Management: ${plan.management.map((m) => managementWords[m]).join(', ')}.`);
  }
  for (const exercise of plan?.exercisesPrescribed ?? [])
    items.push(`Exercise prescribed: ${exercise}.`);
  if (typeof plan?.followUpWeeks === 'number') {
    items.push(
      plan.followUpWeeks === 0
        ? 'No further appointment is planned.'
        : `Follow-up in ${plan.followUpWeeks} week${plan.followUpWeeks === 1 ? '' : 's'}.`,
    );
  }
  if (items.length > 0) blocks.push({ type: 'list', items });
  if (planText) blocks.push({ type: 'paragraph', text: planText });
  if (blocks.length === 1)
    blocks.push({ type: 'paragraph', text: 'No plan was recorded at this visit.' });
  return blocks;
}

export function signatureOf(letter: LetterRecordFields, clinician: ClinicianDetails) {
  const statusLine =
    letter.status === 'final' && letter.finalisedAt
      ? `Finalised ${longDate(letter.finalisedAt.slice(0, 10), 'finalisedAt')}`
      : 'Draft — not yet finalised';
  return { name: clinician.name, role: clinician.role, statusLine };
}

export function buildClinicLetter(input: ClinicLetterInput): LetterLayout {
  const { letter, patient, current, clinician } = input;
  const earlier = [...(input.earlier ?? [])]
    .filter((v) => v.visit.date <= current.visit.date && v.visit.id !== current.visit.id)
    .sort(byDate);
  const previous = earlier.at(-1) ?? null;
  const referrerName = letter.recipientName ?? patient.referrer?.name ?? null;

  const blocks: LetterBlock[] = [];
  const visitDate = longDate(current.visit.date, 'visit.date');
  blocks.push({
    type: 'paragraph',
    text:
      letter.opening ??
      `${referrerName ? `Dear ${referrerName}, thank` : 'Thank'} you for referring ${patientName(patient)}, whom I saw on ${visitDate}${current.visit.reason ? ` (${current.visit.reason})` : ''}. My findings are below.`,
  });

  blocks.push({ type: 'heading', text: 'Findings' });
  const rows = comparisonRows(current, previous);
  if (rows.length > 0) {
    blocks.push({
      type: 'findings',
      columns: [
        'Finding',
        `This visit (${shortDate(current.visit.date)})`,
        previous ? `Previous visit (${shortDate(previous.visit.date)})` : 'Previous visit',
      ],
      rows,
    });
  } else {
    blocks.push({ type: 'paragraph', text: 'No measurements were recorded at this visit.' });
  }
  if (!previous)
    blocks.push({
      type: 'paragraph',
      text: 'This is the first visit on record, so there is nothing earlier to compare with.',
    });
  if (letter.findingsText) blocks.push({ type: 'paragraph', text: letter.findingsText });

  const computed = letterInterpretations(current, patient);
  if (computed.length > 0)
    blocks.push({ type: 'interpretation', label: INTERPRETATION_LABEL, items: computed });

  const trend = trendOf([...earlier, current]);
  if (trend) blocks.push({ type: 'heading', text: 'Course across visits' }, trend);

  blocks.push(...planBlocks(current.plan, letter.planText));
  blocks.push({
    type: 'paragraph',
    text:
      letter.closing ?? 'Please contact the clinic if you would like to discuss these findings.',
  });

  return {
    kind: 'referrer',
    status: letter.status === 'final' ? 'final' : 'draft',
    letterhead: letterheadOf(input.clinic),
    dateLine: longDate(input.issuedOn, 'issuedOn'),
    recipient: referrerName ? { name: referrerName, lines: [] } : null,
    identifiers: identifiersOf(patient),
    title: letter.subject ?? `Orthoptic assessment of ${patientName(patient)}, ${visitDate}`,
    blocks,
    signature: signatureOf(letter, clinician),
    caution: CLINICAL_CAUTION,
    footer: `Fuselight letter${letter.id ? ` ${letter.id}` : ''} · ${letter.status === 'final' ? 'final' : 'draft'}`,
  };
}

export { identifiersOf as letterIdentifiers };
