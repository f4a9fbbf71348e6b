'use client';
import { useState } from 'react';
import Link from 'next/link';
import useSWR from 'swr';
import { getJson, postJson } from '@/components/fetcher';
import { Pager } from '@/components/pager';

type Row = { id: number; screeningNumber: string; screeningDate: string | null; age: number | null; sex: string | null; outcome: string; reasons: string[]; subjectCode: string | null };
const OUTCOME_LABEL: Record<string, string> = { pending: 'awaiting eligibility', eligible: 'eligible', not_eligible: 'not eligible', declined: 'declined', other: 'other' };

/** A site's screening log: record screened patients, filter by outcome, sort, page on the server. */
export function ScreeningLog({ study, site, canEdit }: { study: string; site: string; canEdit: boolean }) {
  const [page, setPage] = useState(1);
  const [outcome, setOutcome] = useState('');
  const [sort, setSort] = useState<{ col: string; dir: 'asc' | 'desc' }>({ col: 'date', dir: 'desc' });
  const base = `/api/studies/${study}/sites/${site}/screening`;
  const q = new URLSearchParams({ page: String(page), sort: sort.col, dir: sort.dir, ...(outcome ? { outcome } : {}) });
  const { data, error, mutate } = useSWR<{ rows: Row[]; total: number; page: number; pageSize: number }>(`${base}?${q}`, getJson);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);

  async function record(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const f = new FormData(form);
    const body = { screeningNumber: String(f.get('screeningNumber')), screeningDate: String(f.get('screeningDate')), age: Number(f.get('age')), sex: String(f.get('sex')) };
    const r = await postJson(base, body);
    if (r.ok) {
      form.reset();
      setMsg({ ok: true, text: `${body.screeningNumber} added to the screening log. Open it to fill the eligibility form.` });
      mutate();
    } else setMsg({ ok: false, text: `${r.error.message}${r.error.fields ? ' ' + Object.values(r.error.fields).join(' ') : ''}` });
  }
  async function decline(row: Row) {
    const reason = window.prompt(`Why did ${row.screeningNumber} not continue (declined)?`);
    if (!reason) return;
    const r = await postJson(`${base}/${row.id}/outcome`, { outcome: 'declined', reason });
    setMsg(r.ok ? { ok: true, text: `${row.screeningNumber} recorded as declined.` } : { ok: false, text: r.error.message });
    mutate();
  }
  const sortBy = (col: string) => setSort((s) => ({ col, dir: s.col === col && s.dir === 'desc' ? 'asc' : 'desc' }));
  const th = (col: string, label: string) => (
    <th scope="col" aria-sort={sort.col === col ? (sort.dir === 'asc' ? 'ascending' : 'descending') : 'none'}>
      <button type="button" className="font-semibold underline decoration-dotted" onClick={() => sortBy(col)}>{label}</button>
    </th>
  );

  return (
    <div className="flex flex-col gap-3">
      {msg && <p role={msg.ok ? 'status' : 'alert'} className={msg.ok ? 'notice-ok' : 'notice-error'}>{msg.text}</p>}
      {canEdit && (
        <form onSubmit={record} className="panel grid grid-cols-2 gap-3 md:grid-cols-5 md:items-end" aria-labelledby="screen-h">
          <h2 id="screen-h" className="col-span-2 md:col-span-5">Record a screened patient</h2>
          <p className="col-span-2 text-xs text-ink-soft md:col-span-5">No names or hospital numbers: the site keeps the key to its screening numbers.</p>
          <div className="flex flex-col gap-1"><label htmlFor="sn">Screening number</label><input id="sn" name="screeningNumber" required pattern="[A-Za-z0-9-]{1,40}" /></div>
          <div className="flex flex-col gap-1"><label htmlFor="sd">Screening date</label><input id="sd" name="screeningDate" type="date" required /></div>
          <div className="flex flex-col gap-1"><label htmlFor="age">Age (years)</label><input id="age" name="age" type="number" min={0} max={120} required /></div>
          <div className="flex flex-col gap-1">
            <label htmlFor="sex">Sex</label>
            <select id="sex" name="sex" required defaultValue=""><option value="" disabled>Choose…</option><option value="F">F</option><option value="M">M</option><option value="U">Unknown</option></select>
          </div>
          <div><button className="btn" type="submit">Add to log</button></div>
        </form>
      )}
      <section className="panel">
        <div className="mb-2 flex items-end gap-3">
          <div className="flex flex-col gap-1">
            <label htmlFor="flt">Outcome</label>
            <select id="flt" value={outcome} onChange={(e) => { setOutcome(e.target.value); setPage(1); }}>
              <option value="">All</option>
              {Object.entries(OUTCOME_LABEL).map(([k, v]) => <option key={k} value={k}>{v}</option>)}
            </select>
          </div>
        </div>
        {error && <p role="alert" className="notice-error">{error.message}</p>}
        {data && (
          <>
            <table>
              <thead><tr>{th('number', 'Screening number')}{th('date', 'Date')}{th('age', 'Age')}<th scope="col">Sex</th>{th('outcome', 'Outcome')}<th scope="col">Reasons</th><th scope="col">Study ID</th>{canEdit && <th scope="col">Action</th>}</tr></thead>
              <tbody>
                {data.rows.map((r) => (
                  <tr key={r.id}>
                    <td className="font-mono"><Link href={`/studies/${study}/sites/${site}/participants/${r.id}`}>{r.screeningNumber}</Link></td>
                    <td>{r.screeningDate ?? '—'}</td>
                    <td className="tabular-nums">{r.age ?? '—'}</td>
                    <td>{r.sex ?? '—'}</td>
                    <td><span className="tag">{OUTCOME_LABEL[r.outcome] ?? r.outcome}</span></td>
                    <td className="max-w-md text-xs">{r.reasons.join('; ') || '—'}</td>
                    <td className="font-mono">{r.subjectCode ?? '—'}</td>
                    {canEdit && <td>{!r.subjectCode && r.outcome !== 'declined' && r.outcome !== 'not_eligible' && <button type="button" className="btn-quiet" onClick={() => decline(r)}>Declined</button>}</td>}
                  </tr>
                ))}
              </tbody>
            </table>
            <Pager page={data.page} pageSize={data.pageSize} total={data.total} onPage={setPage} />
          </>
        )}
      </section>
    </div>
  );
}
