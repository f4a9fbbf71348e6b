'use client';
import { useState } from 'react';
import useSWR from 'swr';
import { getJson, postJson } from '@/components/fetcher';

type Sig = { id: number; signer: string; meaning: string; signedAt: string; status: string; invalidatedReason: string | null };

/** Casebook signatures, and the investigator's signing form (password re-entered, meaning stated). */
export function SignPanel({ url, canSign }: { url: string; canSign: boolean }) {
  const { data, mutate } = useSWR<{ rows: Sig[] }>(url, getJson);
  const [password, setPassword] = useState('');
  const [confirm, setConfirm] = useState(false);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  async function sign(e: React.FormEvent) {
    e.preventDefault();
    const r = await postJson(url, { password, confirm });
    setMsg(r.ok ? { ok: true, text: 'The casebook is signed.' } : { ok: false, text: r.error.message });
    setPassword('');
    mutate();
  }
  return (
    <section className="panel" aria-labelledby="sig-h">
      <h2 id="sig-h" className="mb-2 text-base">Electronic signatures</h2>
      {data && data.rows.length === 0 && <p className="text-sm text-ink-faint">Not signed.</p>}
      <ul className="mb-2 text-sm">
        {data?.rows.map((s) => (
          <li key={s.id}>
            Signed by <strong>{s.signer}</strong> on {s.signedAt.replace('T', ' ').slice(0, 19)} UTC — “{s.meaning}”{' '}
            <span className={`tag ${s.status === 'valid' ? '' : 'border-danger text-danger'}`}>{s.status}</span>
            {s.invalidatedReason && <span className="text-xs"> ({s.invalidatedReason})</span>}
          </li>
        ))}
      </ul>
      {msg && <p role={msg.ok ? 'status' : 'alert'} className={msg.ok ? 'notice-ok' : 'notice-error'}>{msg.text}</p>}
      {canSign && (
        <form onSubmit={sign} className="flex flex-wrap items-end gap-3">
          <label className="flex items-center gap-2 font-normal">
            <input type="checkbox" checked={confirm} onChange={(e) => setConfirm(e.target.checked)} /> I confirm these data are accurate and complete.
          </label>
          <div className="flex flex-col gap-1">
            <label htmlFor="sig-pw">Your password</label>
            <input id="sig-pw" type="password" autoComplete="current-password" value={password} onChange={(e) => setPassword(e.target.value)} required />
          </div>
          <button type="submit" className="btn" disabled={!confirm || !password}>Sign casebook</button>
        </form>
      )}
    </section>
  );
}
