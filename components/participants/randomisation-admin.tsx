'use client';
import useSWR from 'swr';
import { useState } from 'react';
import { getJson, postJson } from '@/components/fetcher';

type Status = { active: false } | { active: true; algorithmVersion: string; commitment: string; perStratum: number; activatedAt: string; allocated: number };
type Register = { rows: { id: number; subjectCode: string; by: string; role: string; reason: string; at: string }[] };

/** The data manager's randomisation page: activate once, see the commitment, read the unblinding register. */
export function RandomisationAdmin({ study }: { study: string }) {
  const { data, mutate } = useSWR<Status>(`/api/studies/${study}/randomisation`, getJson);
  const reg = useSWR<Register>(`/api/studies/${study}/unblinding`, getJson);
  const [err, setErr] = useState<string | null>(null);
  async function activate() {
    if (!window.confirm('Generate the allocation schedule now? This happens once for the study.')) return;
    const r = await postJson(`/api/studies/${study}/randomisation/activate`, {});
    if (!r.ok) setErr(r.error.message);
    mutate();
  }
  return (
    <div className="flex flex-col gap-3">
      {err && <p role="alert" className="notice-error">{err}</p>}
      <section className="panel">
        <h2 className="mb-2">Allocation schedule</h2>
        {!data ? null : data.active ? (
          <dl className="grid grid-cols-[12rem_1fr] gap-1 text-sm">
            <dt>Activated</dt><dd>{data.activatedAt}</dd>
            <dt>Algorithm</dt><dd>{data.algorithmVersion}</dd>
            <dt>Slots per stratum</dt><dd>{data.perStratum}</dd>
            <dt>Participants allocated</dt><dd>{data.allocated}</dd>
            <dt>Commitment (SHA-256)</dt><dd className="break-all font-mono text-xs">{data.commitment}</dd>
          </dl>
        ) : (
          <>
            <p className="mb-2 text-sm">Not active. Activation generates the concealed schedule once and records a commitment that is verified at database lock.</p>
            <button type="button" className="btn" onClick={activate}>Activate randomisation</button>
          </>
        )}
      </section>
      <section className="panel">
        <h2 className="mb-2">Unblinding register</h2>
        {reg.data && reg.data.rows.length === 0 && <p className="text-sm">No emergency unblinding so far.</p>}
        {reg.data && reg.data.rows.length > 0 && (
          <table>
            <thead><tr><th scope="col">When (UTC)</th><th scope="col">Participant</th><th scope="col">By</th><th scope="col">Reason</th></tr></thead>
            <tbody>{reg.data.rows.map((r) => <tr key={r.id}><td>{r.at.replace('T', ' ').slice(0, 16)}</td><td className="font-mono">{r.subjectCode}</td><td>{r.by} ({r.role})</td><td>{r.reason}</td></tr>)}</tbody>
          </table>
        )}
      </section>
    </div>
  );
}
