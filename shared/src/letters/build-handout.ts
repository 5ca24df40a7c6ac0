// The patient's exercise handout: the fusional vergence exercises prescribed at a visit, in plain
// words for the patient and family, with when to stop and ask for advice.
import { CLINICAL_CAUTION } from '../clinical/caution';
import { ClinicalInputError } from '../clinical/clinical-input.error';
import { longDate } from './dates';
import {
  letterheadOf,
  letterIdentifiers,
  patientName,
  signatureOf,
  type ClinicianDetails,
  type ClinicDetails,
  type ClinicLetterInput,
  type LetterRecordFields,
} from './build-letter';
import type { LetterBlock, LetterLayout } from './letter-layout';
import type { VisitFindings } from './visit-findings';

export const STOP_AND_ASK_ADVICE =
  'Stop the exercises and contact the clinic for advice if your symptoms get worse — for example more double vision, headaches, eye strain or blurred vision than before you started.';

export interface ExerciseHandoutInput {
  clinic: ClinicDetails;
  patient: ClinicLetterInput['patient'];
  letter: LetterRecordFields;
  visit: VisitFindings['visit'];
  plan: VisitFindings['plan'];
  clinician: ClinicianDetails;
  issuedOn: string;
}

export function buildExerciseHandout(input: ExerciseHandoutInput): LetterLayout {
  const exercises = input.plan?.exercisesPrescribed ?? [];
  if (exercises.length === 0) {
    throw new ClinicalInputError(
      'plan.exercisesPrescribed',
      'no exercises were prescribed at this visit, so there is nothing for a handout to explain',
    );
  }
  const weeks = input.plan?.followUpWeeks;
  const blocks: LetterBlock[] = [
    {
      type: 'paragraph',
      text:
        input.letter.opening ??
        `These exercises help both eyes work together as a team. They were chosen for ${patientName(input.patient)} at the visit on ${longDate(input.visit.date, 'visit.date')}.`,
    },
    { type: 'heading', text: 'Your exercises' },
    { type: 'list', items: exercises.map((exercise) => exercise) },
    { type: 'heading', text: 'How to do them' },
    {
      type: 'list',
      items: [
        'Do them in good light, sitting comfortably, wearing your glasses if you have them.',
        'Keep each session short, as shown above. Little and often works better than a long session.',
        'It is normal for the eyes to feel a little tired afterwards. Rest your eyes by looking at something far away.',
        'Write down each day you did the exercises and bring the list to your next visit.',
      ],
    },
    { type: 'heading', text: 'When to stop' },
    { type: 'notice', text: STOP_AND_ASK_ADVICE },
  ];
  if (typeof weeks === 'number' && weeks > 0) {
    blocks.push({
      type: 'paragraph',
      text: `We would like to see you again in about ${weeks} week${weeks === 1 ? '' : 's'} to check how the exercises are going.`,
    });
  }
  if (input.letter.closing) blocks.push({ type: 'paragraph', text: input.letter.closing });
  return {
    kind: 'handout',
    status: input.letter.status === 'final' ? 'final' : 'draft',
    letterhead: letterheadOf(input.clinic),
    dateLine: longDate(input.issuedOn, 'issuedOn'),
    recipient: null,
    identifiers: letterIdentifiers(input.patient),
    title: input.letter.subject ?? 'Your eye exercises',
    blocks,
    signature: signatureOf(input.letter, input.clinician),
    caution: CLINICAL_CAUTION,
    footer: `Fuselight handout${input.letter.id ? ` ${input.letter.id}` : ''} · ${input.letter.status === 'final' ? 'final' : 'draft'}`,
  };
}
