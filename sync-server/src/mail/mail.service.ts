// Sending final letters by e-mail. A tablet asks for a send by setting the letter's deliveryState
// to `queued` (offline, through its Outbox); once that change reaches the server, `enqueueRequests`
// turns it into mail_outbox rows, one per recipient on file, and `sendDue` sends them with
// back-off. Each outcome is written back to the letter record (queued with the last error and the
// attempt count, sent, or failed with the reason) so it shows on the visit after the next sync.
import { EntityManager } from '@mikro-orm/postgresql';
import { Inject, Injectable, Logger } from '@nestjs/common';
import {
  chooseRecipients,
  type JsonValue,
  type MailRecipient,
  type RecordFields,
} from '@fuselight/shared';
import { CLOCK, IDS, type Clock, type IdGenerator } from '../common/clock.provider';
import { APP_CONFIG, type AppConfig } from '../config/app-config';
import { letterFonts } from '../letters/letter-fonts';
import { renderLetterPdf } from '@fuselight/shared/letter-pdf';
import { LetterSourceService } from '../letters/letter-source.service';
import { letterFileName } from '../letters/letters.service';
import { RecordAccess } from '../letters/record-access';
import { sqlRows } from '../database/sql';
import { LetterRecords, type SendRequestRow } from '../records/letter-records';
import {
  claimDueMail,
  enqueueMail,
  mailOfRequest,
  markAttemptFailed,
  markSent,
  recordRequest,
  type MailOutboxRow,
} from './mail-outbox.repository';
import {
  describeSmtpFailure,
  isPermanentSmtpFailure,
  MAIL_TRANSPORT,
  type MailTransport,
} from './mail-transport';

/** Attempts before a mail is given up as failed. */
export const MAX_MAIL_ATTEMPTS = 8;
const FIRST_RETRY_MS = 30_000;
const LONGEST_RETRY_MS = 60 * 60_000;
const LEASE_MS = 2 * 60_000;

/** 30 s, 1 min, 2 min, … capped at an hour. */
export function retryDelayMs(attemptsSoFar: number): number {
  return Math.min(LONGEST_RETRY_MS, FIRST_RETRY_MS * 2 ** Math.max(0, attemptsSoFar - 1));
}

export interface MailRunSummary {
  enqueued: number;
  refused: number;
  sent: number;
  retried: number;
  failed: number;
}

@Injectable()
export class MailService {
  private readonly logger = new Logger('Mail');

  constructor(
    @Inject(EntityManager) private readonly em: EntityManager,
    @Inject(CLOCK) private readonly clock: Clock,
    @Inject(IDS) private readonly ids: IdGenerator,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(RecordAccess) private readonly records: RecordAccess,
    @Inject(LetterRecords) private readonly letters: LetterRecords,
    @Inject(LetterSourceService) private readonly source: LetterSourceService,
    @Inject(MAIL_TRANSPORT) private readonly transport: MailTransport,
  ) {}

  /** One pass of the worker: new send requests into the outbox, then the due rows sent. */
  async runOnce(): Promise<MailRunSummary> {
    const summary: MailRunSummary = { enqueued: 0, refused: 0, sent: 0, retried: 0, failed: 0 };
    await this.enqueueRequests(summary);
    await this.sendDue(summary);
    return summary;
  }

  async enqueueRequests(summary: MailRunSummary): Promise<void> {
    const requests = await this.letters.pendingSendRequests(this.em.fork(), 50);
    for (const request of requests) {
      const refusal = await this.enqueueOne(request);
      if (refusal === 'taken') continue;
      if (refusal) {
        summary.refused += 1;
        await this.records.writeAsServer(
          'letter',
          request.id,
          { deliveryState: 'failed', deliveryError: refusal.slice(0, 1000) },
          {
            actorId: request.requested_by,
            kind: 'letter.mail_refused',
            detail: { reason: refusal },
          },
        );
      } else {
        summary.enqueued += 1;
      }
    }
  }

  /** Null when queued; 'taken' when another process handled it first; otherwise the refusal. */
  private async enqueueOne(request: SendRequestRow): Promise<string | null> {
    const refusal = await this.refusalOf(request);
    const now = this.clock.now();
    return this.em.fork().transactional(async (tx) => {
      if (typeof refusal === 'string') {
        return (await recordRequest(tx, request, { refused: refusal }, now)) ? refusal : 'taken';
      }
      if (!(await recordRequest(tx, request, { queued: true }, now))) return 'taken';
      for (const recipient of refusal.recipients) {
        await enqueueMail(
          tx,
          {
            id: this.ids.uuid(),
            letterId: request.id,
            siteId: refusal.siteId,
            address: recipient.address,
            role: recipient.role,
            requestedBy: request.requested_by,
            requestHlc: request.request_hlc,
          },
          now,
        );
      }
      return null;
    });
  }

  /** Why a request cannot be sent, or whom it goes to. */
  private async refusalOf(
    request: SendRequestRow,
  ): Promise<string | { siteId: string; recipients: MailRecipient[] }> {
    const em = this.em.fork();
    const [requester] = await sqlRows<{ role: string }>(
      em,
      `select "role" from "app_user" where "id" = ?::uuid`,
      [request.requested_by],
    );
    if (!requester)
      return 'the send was requested by an account the server does not know; nothing was sent';
    if (requester.role === 'admin') {
      return 'an admin account cannot send clinical letters (admins see no clinical content); nothing was sent';
    }
    const letter = await this.records.get('letter', request.id, em);
    if (!letter) return 'the letter no longer exists';
    const fields = letter.fields as Partial<RecordFields<'letter'>> & {
      copyToPatient?: boolean | null;
    };
    const patient = fields.patientId
      ? await this.records.get('patient', fields.patientId, em)
      : null;
    if (!patient)
      return `the letter's patient ${fields.patientId ?? ''} is not on the server; nothing was sent`;
    const choice = chooseRecipients(
      fields,
      patient.fields as RecordFields<'patient'> & { email?: string | null },
    );
    if (choice.problems.length > 0)
      return choice.problems.map((p) => `${p.field}: ${p.message}`).join('; ');
    if (choice.recipients.length === 0) return 'there is no address on file to send this letter to';
    return { siteId: letter.siteId, recipients: choice.recipients };
  }

  async sendDue(summary: MailRunSummary): Promise<void> {
    const now = this.clock.now();
    const rows = await claimDueMail(this.em.fork(), now, new Date(now.getTime() + LEASE_MS), 10);
    const touched = new Map<string, MailOutboxRow>();
    for (const row of rows) {
      touched.set(`${row.letter_id} ${row.request_hlc}`, row);
      await this.sendOne(row, summary);
    }
    for (const row of touched.values()) await this.writeBack(row);
  }

  private async sendOne(row: MailOutboxRow, summary: MailRunSummary): Promise<void> {
    const em = this.em.fork();
    try {
      const { layout, patient } = await this.source.load(row.letter_id);
      const pdf = await renderLetterPdf(layout, letterFonts());
      const patientFields = patient.fields as RecordFields<'patient'>;
      const date = layout.kind === 'handout' ? 'handout' : 'letter';
      const result = await this.transport.send({
        from: this.config.smtp.from,
        to: row.recipient_address,
        subject: `${layout.letterhead.clinicName}: ${layout.title}`,
        text: [
          `Please find attached a ${date} from ${layout.letterhead.clinicName} (clinic number ${patientFields.clinicNumber}).`,
          '',
          'This message was sent by Fuselight on behalf of the clinic. If it reached you in error, please tell the clinic and delete it.',
          '',
          layout.caution,
        ].join('\n'),
        attachments: [
          {
            filename: letterFileName(
              patientFields.clinicNumber,
              (row.sent_at ?? this.clock.now()).toISOString().slice(0, 10),
              layout.kind,
            ),
            content: Buffer.from(pdf),
            contentType: 'application/pdf',
          },
        ],
      });
      await markSent(em, row.id, result.messageId, this.clock.now());
      summary.sent += 1;
    } catch (error) {
      const reason = describeSmtpFailure(error);
      const attempts = row.attempts + 1;
      if (isPermanentSmtpFailure(error) || attempts >= MAX_MAIL_ATTEMPTS) {
        await markAttemptFailed(em, row.id, reason, { permanent: true });
        summary.failed += 1;
      } else {
        await markAttemptFailed(em, row.id, reason, {
          retryAt: new Date(this.clock.now().getTime() + retryDelayMs(attempts)),
        });
        summary.retried += 1;
      }
      this.logger.warn(`mail ${row.id} for letter ${row.letter_id}: ${reason}`);
    }
  }

  /** The delivery state of the request, as the letter record shows it. */
  private async writeBack(row: MailOutboxRow): Promise<void> {
    const mails = await mailOfRequest(this.em.fork(), row.letter_id, row.request_hlc);
    const attempts = Math.max(0, ...mails.map((m) => m.attempts));
    const failed = mails.find((m) => m.status === 'failed');
    const lastError = mails.find((m) => m.last_error)?.last_error ?? null;
    const allSent = mails.length > 0 && mails.every((m) => m.status === 'sent');
    const fields: Record<string, JsonValue> = failed
      ? {
          deliveryState: 'failed',
          deliveryError: `${failed.recipient_role} copy: ${failed.last_error ?? 'failed'}`.slice(
            0,
            1000,
          ),
          deliveryAttempts: attempts,
        }
      : allSent
        ? {
            deliveryState: 'sent',
            sentAt: new Date(
              Math.max(...mails.map((m) => new Date(m.sent_at ?? 0).getTime())),
            ).toISOString(),
            deliveryError: null,
            deliveryAttempts: attempts,
          }
        : // Still queued: the tablet's send request stays as it is; only the attempt and the last
          // error change (rewriting deliveryState would read as a new request).
          {
            deliveryError: lastError ? `will retry: ${lastError}`.slice(0, 1000) : null,
            deliveryAttempts: attempts,
          };
    await this.records.writeAsServer('letter', row.letter_id, fields, {
      actorId: row.requested_by,
      kind: failed ? 'letter.mail_failed' : allSent ? 'letter.mail_sent' : 'letter.mail_retry',
      detail: { recipients: mails.map((m) => m.recipient_role), attempts },
    });
  }
}
