// What may change on a letter record, for the server's push check and the tablet's editor alike:
// a final letter never changes (only a send request may still be made on it), the delivery fields
// belong to the server's mailer, and mail goes only to an address already on the patient's record.
import { z } from 'zod';
import type { RecordFields } from '../schemas/registry';

type LetterFields = Partial<RecordFields<'letter'>>;

/** Written only by the server's mailer. */
export const LETTER_DELIVERY_FIELDS = ['deliveryAttempts', 'sentAt', 'deliveryError'] as const;

export interface LetterProblem {
  field: string;
  message: string;
}

/**
 * Why a device's change to a letter cannot be accepted, or [] when it can. `current` is the
 * letter as stored before the change (null when the change creates it).
 */
export function letterChangeProblems(
  current: LetterFields | null,
  changed: Readonly<Record<string, unknown>>,
): LetterProblem[] {
  const problems: LetterProblem[] = [];
  const wasFinal = current?.status === 'final';
  const becomesFinal = changed.status === 'final';
  const final = wasFinal || becomesFinal;
  const requestsSend =
    changed.deliveryState === 'queued' || (changed.sendRequestedAt ?? null) !== null;
  for (const field of Object.keys(changed)) {
    if ((LETTER_DELIVERY_FIELDS as readonly string[]).includes(field)) {
      problems.push({
        field,
        message: `${field} is written by the clinic server's mailer, not by a tablet`,
      });
      continue;
    }
    if (field === 'deliveryState') {
      if (changed.deliveryState !== 'queued') {
        problems.push({
          field,
          message: 'deliveryState may only be set to queued by a tablet (a send request)',
        });
      } else if (!final) {
        problems.push({
          field,
          message: 'deliveryState: a letter can be sent only once it is final',
        });
      }
      continue;
    }
    if (field === 'sendRequestedAt') {
      if (changed.sendRequestedAt !== null && !final) {
        problems.push({
          field,
          message: 'sendRequestedAt: a letter can be sent only once it is final',
        });
      }
      continue;
    }
    // Whether the patient gets a copy is part of the send request, so it may come with one.
    if (field === 'copyToPatient' && requestsSend) continue;
    if (wasFinal && !(field === 'status' && changed.status === 'final')) {
      problems.push({
        field,
        message: `${field}: this letter is final and can no longer be changed; write a new letter instead`,
      });
    }
  }
  if (becomesFinal && !wasFinal) {
    const finalisedAt = changed.finalisedAt ?? current?.finalisedAt;
    const finalisedBy = changed.finalisedBy ?? current?.finalisedBy;
    if (!finalisedAt)
      problems.push({
        field: 'finalisedAt',
        message: 'finalisedAt is required when a letter is finalised',
      });
    if (!finalisedBy)
      problems.push({
        field: 'finalisedBy',
        message: 'finalisedBy is required when a letter is finalised',
      });
  }
  return problems;
}

export interface MailRecipient {
  address: string;
  role: 'referrer' | 'patient';
  name: string | null;
}

export interface RecipientChoice {
  recipients: MailRecipient[];
  problems: LetterProblem[];
}

const emailCheck = z.email();

/** Lower-cased and trimmed, the form addresses are compared in. */
export function normaliseAddress(address: string): string {
  return address.trim().toLowerCase();
}

/**
 * Who a final letter goes to: the referrer's address on file (a handout has no referrer copy),
 * and the patient's own address on file when a copy is asked for. An address typed on the letter
 * must be one of those; nothing outside the record is ever mailed.
 */
export function chooseRecipients(
  letter: LetterFields & { copyToPatient?: boolean | null },
  patient: { referrer?: { name: string; email?: string | null } | null; email?: string | null },
): RecipientChoice {
  const problems: LetterProblem[] = [];
  const recipients: MailRecipient[] = [];
  if (letter.status !== 'final') {
    problems.push({ field: 'status', message: 'only a final letter is sent' });
    return { recipients, problems };
  }
  const referrerAddress = patient.referrer?.email ?? null;
  const patientAddress = patient.email ?? null;
  const onFile = [referrerAddress, patientAddress]
    .filter((a): a is string => !!a)
    .map(normaliseAddress);
  if (letter.recipientEmail && !onFile.includes(normaliseAddress(letter.recipientEmail))) {
    problems.push({
      field: 'recipientEmail',
      message: `recipientEmail ${letter.recipientEmail} is not the referrer's or the patient's address on file; nothing was sent`,
    });
    return { recipients, problems };
  }
  if (letter.kind === 'referrer') {
    if (!referrerAddress) {
      problems.push({
        field: 'patient.referrer.email',
        message: "the patient's record has no referrer e-mail address",
      });
    } else if (!emailCheck.safeParse(referrerAddress).success) {
      problems.push({
        field: 'patient.referrer.email',
        message: `the referrer's address on file (${referrerAddress}) is not a valid e-mail address`,
      });
    } else {
      recipients.push({
        address: normaliseAddress(referrerAddress),
        role: 'referrer',
        name: patient.referrer?.name ?? null,
      });
    }
  }
  const wantsPatient = letter.kind === 'handout' || letter.copyToPatient === true;
  if (wantsPatient) {
    if (!patientAddress) {
      problems.push({
        field: 'patient.email',
        message: "the patient's record has no e-mail address for a copy",
      });
    } else if (!emailCheck.safeParse(patientAddress).success) {
      problems.push({
        field: 'patient.email',
        message: `the patient's address on file (${patientAddress}) is not a valid e-mail address`,
      });
    } else if (!recipients.some((r) => r.address === normaliseAddress(patientAddress))) {
      recipients.push({ address: normaliseAddress(patientAddress), role: 'patient', name: null });
    }
  }
  return { recipients, problems };
}
