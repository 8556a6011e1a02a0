// Outgoing mail through SMTP (the local catcher in dev/test). Node only.
import nodemailer, { type Transporter } from 'nodemailer';
import { getEnv } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';

const mlog = log.child({ surface: 'mail' });

type Cache = { transport?: Transporter };
const g = globalThis as typeof globalThis & { __lobelineMail?: Cache };
if (!g.__lobelineMail) g.__lobelineMail = {};
const state: Cache = g.__lobelineMail;

export function getMailTransport(): Transporter {
  if (!state.transport) {
    const env = getEnv();
    state.transport = nodemailer.createTransport({
      host: env.SMTP_HOST,
      port: env.SMTP_PORT,
      secure: false,
      ignoreTLS: true,
      connectionTimeout: 10_000,
      greetingTimeout: 10_000,
      socketTimeout: 30_000,
    });
  }
  return state.transport;
}

export function closeMailTransport(): void {
  state.transport?.close();
  state.transport = undefined;
}

export interface MailInput {
  to: string | string[];
  subject: string;
  text: string;
  html?: string;
}

export async function sendMail(input: MailInput): Promise<{ messageId: string }> {
  const to = Array.isArray(input.to) ? input.to : [input.to];
  if (to.length === 0) throw new AppError('bad_request:mail', { message: 'No recipient given.' });
  try {
    const info = await getMailTransport().sendMail({
      from: getEnv().MAIL_FROM,
      to,
      subject: input.subject,
      text: input.text,
      html: input.html,
    });
    mlog.info('mail sent', { to: to.length, subject: input.subject, messageId: info.messageId });
    return { messageId: String(info.messageId) };
  } catch (err) {
    mlog.error('mail could not be sent', { subject: input.subject, err });
    throw new AppError('unavailable:mail', { cause: err, context: { subject: input.subject } });
  }
}
