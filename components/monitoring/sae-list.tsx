'use client';
import { useState } from 'react';
import useSWR from 'swr';
import { getJson, postJson } from '@/components/fetcher';

type Row = { id: number; participant: string; awareAt: string; deadlineAt: string; followedUpAt: string | null; state: string };

/** Serious adverse events awaiting follow-up or past their 24-hour deadline; the investigator records the follow-up. */
export function SaeList({ study, canFollowUp }: { study: string; canFollowUp: boolean }) {
  const { data, error, mutate } = useSWR<{ rows: Row[] }>(`/api/studies/${study}/safety`, getJson);
  const [note, setNote] = useState<Record<number, string>>({});
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const open = (data?.rows ?? []).filter((r) => r.state !== 'followed up');
  async function followUp(r: Row) {
    const res = await postJson(`/api/studies/${study}/safety/${r.id}/follow-up`, { note: note[r.id] ?? '' });
    setMsg(res.ok ? { ok: true, text: `Follow-up recorded for ${r.participant}.` } : { ok: false, text: res.error.message });
    if (res.ok) await mutate();
  }
  if (error) return <p role="alert" className="notice-error">{error.message}</p>;
  if (!data) return <p className="text-sm">Loading serious adverse events…</p>;
  return (
    <div className="flex flex-col gap-2">
      {msg && <p role="status" className={msg.ok ? 'notice-ok' : 'notice-error'}>{msg.text}</p>}
      {open.length === 0 ? <p className="text-sm">No serious adverse event is awaiting follow-up.</p> : (
        <table>
          <thead><tr><th scope="col">Participant</th><th scope="col">Site aware (UTC)</th><th scope="col">Due (UTC)</th><th scope="col">State</th>{canFollowUp && <th scope="col">Follow-up</th>}</tr></thead>
          <tbody>
            {open.map((r) => (
              <tr key={r.id}>
                <td>{r.participant}</td>
                <td className="tabular-nums">{r.awareAt.slice(0, 16).replace('T', ' ')}</td>
                <td className="tabular-nums">{r.deadlineAt.slice(0, 16).replace('T', ' ')}</td>
                <td><span className={r.state === 'overdue' ? 'tag text-danger' : 'tag'}>{r.state === 'overdue' ? 'past deadline' : r.state}</span></td>
                {canFollowUp && (
                  <td>
                    <div className="flex items-end gap-2">
                      <label className="sr-only" htmlFor={`sae-note-${r.id}`}>Follow-up note for {r.participant}</label>
                      <input id={`sae-note-${r.id}`} value={note[r.id] ?? ''} onChange={(e) => setNote({ ...note, [r.id]: e.target.value })} placeholder="What was done" />
                      <button type="button" className="btn" onClick={() => followUp(r)}>Record follow-up</button>
                    </div>
                  </td>
                )}
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </div>
  );
}
