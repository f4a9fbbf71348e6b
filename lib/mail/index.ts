import 'server-only';
import nodemailer, { type Transporter } from 'nodemailer';
import { config } from '@/lib/config';

type Cache = { __excursionMail?: Transporter };
const g = globalThis as unknown as Cache;

function transport(): Transporter {
  if (!g.__excursionMail) {
    const s = config.smtp();
    g.__excursionMail = nodemailer.createTransport({
      host: s.host,
      port: s.port,
      secure: s.secure,
      auth: s.user ? { user: s.user, pass: s.pass ?? '' } : undefined,
      // The local fake speaks plain SMTP on loopback; a real provider is configured with SMTP_SECURE or STARTTLS.
      ignoreTLS: !s.secure && s.host === '127.0.0.1',
      connectionTimeout: 5000,
      greetingTimeout: 5000,
    });
  }
  return g.__excursionMail;
}

export type Mail = { to: string | string[]; subject: string; text: string };

/** Sends one plain-text e-mail through the configured SMTP server. */
export async function sendMail(m: Mail): Promise<void> {
  await transport().sendMail({ from: config.smtp().from, to: m.to, subject: m.subject, text: m.text });
}
