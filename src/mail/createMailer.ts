import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import type { Transporter } from 'nodemailer';
import type { Mailer, MailOutcome, OutgoingMail } from '../elections/mailPort.ts';
import { headerText, mailAddress } from './headers.ts';

/**
 * The mail adapter. With an SMTP URL, messages go to that server through nodemailer's SMTP pool;
 * without one, nodemailer composes each message into a buffer and it is written as an .eml file into
 * the outbox folder (written under a temporary name and renamed, so a file in the outbox is always
 * whole). Nodemailer's own logging stays off: its debug output would include message bodies, and
 * so the codes. nodemailer is loaded on the first message, not at start-up, which most runs never reach.
 */
export interface MailSettings {
  readonly smtpUrl: string | undefined;
  readonly from: { readonly name: string; readonly address: string };
  /** Where .eml files go when there is no SMTP server. */
  readonly outboxDir: string;
}

function message(from: MailSettings['from'], mail: OutgoingMail) {
  const address = mailAddress.parse(mail.to.address);
  const name = mail.to.name ? headerText(mail.to.name, 100) : '';
  return {
    from: from.name ? { name: from.name, address: from.address } : from.address,
    to: name ? { name, address } : address,
    subject: headerText(mail.subject, 200),
    text: mail.text,
    // No X-Mailer header: it would only name the software.
    xMailer: false as const,
  };
}

function answerOf(e: unknown): string {
  const err = e as { response?: unknown; message?: unknown; code?: unknown };
  const text = typeof err?.response === 'string' ? err.response : typeof err?.message === 'string' ? err.message : String(e);
  return headerText(text, 500) || 'the mail server did not accept the message';
}

/** One transport, made on first use; `close` only closes one that was made. */
function lazyTransport(options: Record<string, unknown>) {
  let made: Promise<Transporter> | null = null;
  return {
    get: () => (made ??= import('nodemailer').then(({ default: nodemailer }) => nodemailer.createTransport(options))),
    close: async () => {
      if (made) (await made).close();
    },
  };
}

export function createMailer(settings: MailSettings): Mailer {
  if (settings.smtpUrl) {
    const url = new URL(settings.smtpUrl);
    const transport = lazyTransport({ url: settings.smtpUrl, pool: true, maxConnections: 4, logger: false, debug: false });
    return {
      where: { kind: 'smtp', host: url.port ? `${url.hostname}:${url.port}` : url.hostname },
      async send(mail): Promise<MailOutcome> {
        try {
          const info = await (await transport.get()).sendMail(message(settings.from, mail));
          if (info.rejected?.length) return { ok: false, answer: headerText(String(info.response ?? 'recipient refused'), 500) };
          return { ok: true, answer: headerText(String(info.response ?? '250'), 500) };
        } catch (e) {
          return { ok: false, answer: answerOf(e) };
        }
      },
      close: transport.close,
    };
  }
  const folder = settings.outboxDir;
  const transport = lazyTransport({ streamTransport: true, buffer: true, newline: 'windows' });
  return {
    where: { kind: 'outbox', folder },
    async send(mail): Promise<MailOutcome> {
      try {
        const info = (await (await transport.get()).sendMail(message(settings.from, mail))) as unknown as { message: Buffer };
        await fs.promises.mkdir(folder, { recursive: true, mode: 0o700 });
        const name = `${new Date().toISOString().replace(/[:.]/g, '-')}-${crypto.randomBytes(6).toString('hex')}.eml`;
        const tmp = path.join(folder, `.${name}.part`);
        const handle = await fs.promises.open(tmp, 'wx', 0o600);
        try {
          await handle.writeFile(info.message);
          await handle.sync();
        } finally {
          await handle.close();
        }
        await fs.promises.rename(tmp, path.join(folder, name));
        return { ok: true, answer: 'placed in the outbox' };
      } catch (e) {
        return { ok: false, answer: answerOf(e) };
      }
    },
    close: transport.close,
  };
}
