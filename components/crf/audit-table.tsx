'use client';
import { useState } from 'react';
import useSWR from 'swr';
import { getJson } from '@/components/fetcher';
import { Pager } from '@/components/pager';
import { SiteTime, show } from './item-history';

type Row = { id: number; at: string; actor: string | null; role: string | null; action: string; itemPath: string | null; oldValue: unknown; newValue: unknown; reason: string | null; formKey: string; formVersion: number | null };

/** A participant's audit trail with filters (form, date range) and server-side paging. */
export function AuditTable({ url, forms, timeZone }: { url: string; forms: { key: string; title: string }[]; timeZone: string }) {
  const [page, setPage] = useState(1);
  const [form, setForm] = useState('');
  const [from, setFrom] = useState('');
  const [to, setTo] = useState('');
  const q = new URLSearchParams({ page: String(page) });
  if (form) q.set('form', form);
  if (from) q.set('from', from);
  if (to) q.set('to', to);
  const { data, error } = useSWR<{ rows: Row[]; total: number; page: number; pageSize: number }>(`${url}?${q}`, getJson);
  return (
    <div className="flex flex-col gap-3">
      <div className="panel flex flex-wrap items-end gap-3">
        <div className="flex flex-col gap-1">
          <label htmlFor="f-form">Form</label>
          <select id="f-form" value={form} onChange={(e) => { setForm(e.target.value); setPage(1); }}>
            <option value="">All forms</option>
            {forms.map((f) => <option key={f.key} value={f.key}>{f.title}</option>)}
          </select>
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="f-from">From</label>
          <input id="f-from" type="date" value={from} onChange={(e) => { setFrom(e.target.value); setPage(1); }} />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="f-to">To</label>
          <input id="f-to" type="date" value={to} onChange={(e) => { setTo(e.target.value); setPage(1); }} />
        </div>
      </div>
      {error && <p role="alert" className="notice-error">{error.message}</p>}
      {data && (
        <section className="panel">
          <table>
            <thead>
              <tr><th scope="col">When ({timeZone})</th><th scope="col">Who</th><th scope="col">Form</th><th scope="col">Item</th><th scope="col">Old → new</th><th scope="col">Reason</th></tr>
            </thead>
            <tbody>
              {data.rows.map((r) => (
                <tr key={r.id}>
                  <td><SiteTime iso={r.at} timeZone={timeZone} /></td>
                  <td>{r.actor ?? 'system'} <span className="text-ink-faint">({r.role ?? '—'})</span></td>
                  <td>{r.formKey} v{r.formVersion ?? '?'}</td>
                  <td className="font-mono text-xs">{r.itemPath ?? r.action}</td>
                  <td><span className="text-ink-faint">{show(r.oldValue)}</span> → <strong>{show(r.newValue)}</strong></td>
                  <td>{r.reason ?? '—'}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <Pager page={data.page} pageSize={data.pageSize} total={data.total} onPage={setPage} />
        </section>
      )}
    </div>
  );
}
