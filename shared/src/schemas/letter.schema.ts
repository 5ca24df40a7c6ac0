// A letter from a visit: to the referrer, or a handout for the family. Its parts are separate
// fields so that two people editing different paragraphs do not collide; delivery state is
// written by the server's mailer.
import { z } from 'zod';
import { choice, emailAddress, id, instant, measurement, text, yesNo } from './field-types.schema';

export const LETTER_DELIVERY_STATES = ['notSent', 'queued', 'sent', 'failed'] as const;

export const letterSchema = z.object({
  siteId: id('Site'),
  visitId: id('Visit'),
  patientId: id('Patient'),
  kind: choice('Letter kind', { referrer: 'To the referrer', handout: 'Handout' }, [
    'referrer',
    'handout',
  ]),
  status: choice('Letter status', { draft: 'Draft', final: 'Final' }, ['draft', 'final']),
  subject: text('Subject', { max: 200 }).nullish(),
  opening: text('Opening', { max: 2000 }).nullish(),
  findingsText: text('Findings', { max: 8000 }).nullish(),
  planText: text('Plan', { max: 4000 }).nullish(),
  closing: text('Closing', { max: 2000 }).nullish(),
  recipientName: text('Recipient name', { max: 200 }).nullish(),
  recipientEmail: emailAddress('Recipient e-mail').nullish(),
  /** Set on the tablet (possibly offline) to ask the server to send a final letter. */
  sendRequestedAt: instant('Send requested at').nullish(),
  copyToPatient: yesNo('Copy to the patient').nullish(),
  finalisedBy: id('Finalised by').nullish(),
  finalisedAt: instant('Finalised at').nullish(),
  deliveryState: choice(
    'Delivery state',
    { notSent: 'Not sent', queued: 'Queued', sent: 'Sent', failed: 'Failed' },
    LETTER_DELIVERY_STATES,
  ).nullish(),
  deliveryAttempts: measurement({
    label: 'Delivery attempts',
    unit: null,
    min: 0,
    max: 1000,
    integer: true,
  }).nullish(),
  sentAt: instant('Sent at').nullish(),
  deliveryError: text('Delivery error', { max: 1000 }).nullish(),
});
