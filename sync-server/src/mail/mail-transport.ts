// The SMTP transport (nodemailer). In development and tests it points at a local fake SMTP server;
// a production deployment points SMTP_HOST/SMTP_PORT at the clinic's relay.
import nodemailer, { type Transporter } from 'nodemailer';
import type { AppConfig } from '../config/app-config';

export const MAIL_TRANSPORT = Symbol('MAIL_TRANSPORT');

export interface OutgoingMail {
  from: string;
  to: string;
  subject: string;
  text: string;
  attachments: { filename: string; content: Buffer; contentType: string }[];
}

export interface MailTransport {
  send(mail: OutgoingMail): Promise<{ messageId: string | null }>;
  close(): void;
}

export function smtpTransport(config: AppConfig): MailTransport {
  const transporter: Transporter = nodemailer.createTransport({
    host: config.smtp.host,
    port: config.smtp.port,
    secure: config.smtp.secure,
    // The local fakes speak plain SMTP; a real relay is reached with STARTTLS when it offers it.
    ignoreTLS: config.env !== 'production' && !config.smtp.secure,
    connectionTimeout: 10_000,
    greetingTimeout: 10_000,
    socketTimeout: 20_000,
  });
  return {
    async send(mail) {
      const info = (await transporter.sendMail(mail)) as { messageId?: string };
      return { messageId: info.messageId ?? null };
    },
    close() {
      transporter.close();
    },
  };
}

/** SMTP reply codes 5xx are permanent refusals; anything else (4xx, no connection) is retried. */
export function isPermanentSmtpFailure(error: unknown): boolean {
  const code = (error as { responseCode?: unknown } | null)?.responseCode;
  return typeof code === 'number' && code >= 500 && code < 600;
}

export function describeSmtpFailure(error: unknown): string {
  const e = error as {
    code?: string;
    responseCode?: number;
    response?: string;
    message?: string;
  } | null;
  if (e?.responseCode)
    return `the mail relay answered ${e.responseCode}: ${(e.response ?? e.message ?? '').slice(0, 300)}`;
  if (e?.code === 'ECONNREFUSED') return 'the mail relay could not be reached (connection refused)';
  if (e?.code === 'ETIMEDOUT' || e?.code === 'ESOCKET' || e?.code === 'ECONNECTION')
    return `the mail relay could not be reached (${e.code})`;
  return `sending failed: ${(e?.message ?? String(error)).slice(0, 300)}`;
}
