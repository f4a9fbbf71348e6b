'use client';
import { useState } from 'react';
import { postJson } from '@/components/fetcher';

/** Emergency unblinding of one participant, with a reason; the event is registered and the data managers told. */
export function UnblindPanel({ url }: { url: string }) {
  const [reason, setReason] = useState('');
  const [out, setOut] = useState<{ ok: boolean; text: string } | null>(null);
  async function go(e: React.FormEvent) {
    e.preventDefault();
    if (!window.confirm('Reveal this allocation? The event is recorded in the unblinding register and the data managers are told.')) return;
    const r = await postJson<{ armLabel: string; arm: string }>(url, { reason });
    setOut(r.ok ? { ok: true, text: `Allocation: ${r.data.armLabel} (${r.data.arm}).` } : { ok: false, text: r.error.message });
  }
  return (
    <details className="panel">
      <summary className="cursor-pointer font-semibold">Emergency unblinding</summary>
      <form onSubmit={go} className="mt-2 flex flex-col gap-2">
        <label htmlFor="unb-reason">Clinical reason (recorded)</label>
        <textarea id="unb-reason" value={reason} onChange={(e) => setReason(e.target.value)} minLength={10} maxLength={1000} required rows={2} />
        <div><button type="submit" className="btn-danger">Reveal allocation</button></div>
        {out && <p role={out.ok ? 'status' : 'alert'} className={out.ok ? 'notice-warn' : 'notice-error'}>{out.text}</p>}
      </form>
    </details>
  );
}
