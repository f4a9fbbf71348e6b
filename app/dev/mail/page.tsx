import type { Metadata } from 'next';
import { notFound } from 'next/navigation';
import { config } from '@/lib/config';
import { listCapturedMail } from '@/lib/mail/outbox';

export const metadata: Metadata = { title: 'Captured e-mail' };
export const dynamic = 'force-dynamic';

/** Development only: messages caught by the local SMTP fake. Absent unless MAIL_CAPTURE_DIR is set. */
export default async function DevMailPage() {
  if (!config.mailCaptureDir()) notFound();
  const mails = await listCapturedMail();
  return (
    <div>
      <h1 className="mb-1">Captured e-mail</h1>
      <p className="notice-warn mb-4">Development tool: these messages were caught by the local SMTP fake and never left this machine.</p>
      {mails.length === 0 && <p>No messages yet.</p>}
      <ol className="flex flex-col gap-3">
        {mails.map((m) => (
          <li key={m.id} className="panel">
            <h2 className="text-base">{m.subject}</h2>
            <p className="text-xs text-ink-faint">
              {m.receivedAt} · to {m.to.join(', ')}
            </p>
            <pre className="mt-2 whitespace-pre-wrap font-mono text-xs">{m.text}</pre>
          </li>
        ))}
      </ol>
    </div>
  );
}
