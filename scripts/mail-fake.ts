// A local SMTP fake for development and tests: accepts every message on loopback and writes it
// as JSON to MAIL_CAPTURE_DIR, where the development mail page and the tests read it.
import { SMTPServer } from 'smtp-server';
import { simpleParser, type AddressObject } from 'mailparser';
import { mkdirSync, writeFileSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import path from 'node:path';

const dir = process.env.MAIL_CAPTURE_DIR ?? path.resolve('.data/mail');
const port = Number(process.env.SMTP_PORT ?? 2525);
mkdirSync(dir, { recursive: true });

const addresses = (a: AddressObject | AddressObject[] | undefined): string[] =>
  (Array.isArray(a) ? a : a ? [a] : []).flatMap((x) => x.value.map((v) => v.address ?? '')).filter(Boolean);

const server = new SMTPServer({
  authOptional: true,
  disabledCommands: ['STARTTLS'],
  logger: false,
  size: 20 * 1024 * 1024,
  onData(stream, _session, callback) {
    simpleParser(stream)
      .then((mail) => {
        const receivedAt = new Date().toISOString();
        const id = `${receivedAt.replace(/[-:.TZ]/g, '')}-${randomBytes(4).toString('hex')}`;
        const doc = { id, receivedAt, from: mail.from?.text ?? '', to: addresses(mail.to), subject: mail.subject ?? '', text: mail.text ?? '' };
        writeFileSync(path.join(dir, `${id}.json`), JSON.stringify(doc, null, 2));
        callback();
      })
      .catch((e: Error) => callback(e));
  },
});
server.listen(port, '127.0.0.1');
const stop = () => server.close(() => process.exit(0));
process.on('SIGTERM', stop);
process.on('SIGINT', stop);
