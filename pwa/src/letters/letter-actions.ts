// What a clinician does to a letter on the tablet: draft it, edit it, finalise it and ask for it to
// be sent. Each goes through the records repository (Dexie and the Outbox in one transaction), and
// the shared letter rules are checked first, so a final letter is never changed here either.
import { letterChangeProblems, type RecordFields, type RecordFieldsInput } from '@fuselight/shared';
import type { EditContext, RecordsRepository } from '../data';

export class LetterRuleError extends Error {
  override readonly name = 'LetterRuleError';
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
  }
}

type LetterEdit = Partial<RecordFieldsInput<'letter'>>;

async function guardedUpdate(
  records: RecordsRepository,
  letterId: string,
  fields: LetterEdit,
  ctx: EditContext,
): Promise<void> {
  const current = await records.get('letter', letterId);
  if (!current) throw new LetterRuleError('id', `There is no letter ${letterId} on this tablet`);
  const [problem] = letterChangeProblems(current.fields, fields as Record<string, unknown>);
  if (problem) throw new LetterRuleError(problem.field, problem.message);
  await records.update('letter', letterId, fields, ctx);
}

export function draftLetter(
  records: RecordsRepository,
  visit: { id: string; fields: Pick<RecordFields<'visit'>, 'siteId' | 'patientId'> },
  kind: 'referrer' | 'handout',
  referrer: { name: string; email?: string | null } | null | undefined,
  ctx: EditContext,
): Promise<string> {
  return records.create(
    'letter',
    {
      siteId: visit.fields.siteId,
      visitId: visit.id,
      patientId: visit.fields.patientId,
      kind,
      status: 'draft',
      ...(kind === 'referrer' && referrer
        ? { recipientName: referrer.name, recipientEmail: referrer.email ?? null }
        : {}),
    },
    ctx,
  );
}

export function editLetter(
  records: RecordsRepository,
  letterId: string,
  fields: LetterEdit,
  ctx: EditContext,
): Promise<void> {
  return guardedUpdate(records, letterId, fields, ctx);
}

export function finaliseLetter(
  records: RecordsRepository,
  letterId: string,
  ctx: EditContext,
): Promise<void> {
  return guardedUpdate(
    records,
    letterId,
    { status: 'final', finalisedBy: ctx.authorId, finalisedAt: new Date(ctx.nowMs).toISOString() },
    ctx,
  );
}

/**
 * Asks the server to e-mail a final letter. Works offline: the request waits in the Outbox and
 * the server sends once it arrives; the delivery state comes back with a later sync.
 */
export function requestSend(
  records: RecordsRepository,
  letterId: string,
  options: { copyToPatient: boolean },
  ctx: EditContext,
): Promise<void> {
  return guardedUpdate(
    records,
    letterId,
    {
      deliveryState: 'queued',
      sendRequestedAt: new Date(ctx.nowMs).toISOString(),
      ...(options.copyToPatient ? { copyToPatient: true } : {}),
    } as LetterEdit,
    ctx,
  );
}

/** Words for a letter's delivery state on the visit. */
export function deliveryWords(fields: Partial<RecordFields<'letter'>>): string {
  switch (fields.deliveryState ?? 'notSent') {
    case 'notSent':
      return fields.status === 'final' ? 'Final, not sent' : 'Draft';
    case 'queued':
      return fields.deliveryError ? `Queued — ${fields.deliveryError}` : 'Queued to send';
    case 'sent':
      return `Sent${fields.sentAt ? ` ${fields.sentAt.slice(0, 10)}` : ''}`;
    case 'failed':
      return `Not sent: ${fields.deliveryError ?? 'the server could not send it'}`;
  }
}
