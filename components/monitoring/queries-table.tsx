'use client';
import { useState } from 'react';
import { FormLink } from '@/components/crf/form-link';
import useSWR from 'swr';
import { getJson } from '@/components/fetcher';
import { Pager } from '@/components/pager';

type Row = { id: number; participantId: number; participant: string; formKey: string; formTitle: string; visitKey: string; instance: number; itemPath: string; state: string; source: string; message: string; ageDays: number };

/** The form page of the record a query is on (its visit and instance included). */
export function recordHref(study: string, site: string, r: Pick<Row, 'participantId' | 'formKey' | 'visitKey' | 'instance'>) {
  const q = new URLSearchParams();
  if (r.visitKey) q.set('visit', r.visitKey);
  if (r.instance > 1) q.set('instance', String(r.instance));
  return `/studies/${study}/sites/${site}/participants/${r.participantId}/forms/${r.formKey}${q.size ? `?${q}` : ''}`;
}

/** A site's data queries with filters (state, form, age) and counts by state. */
export function QueriesTable({ study, site }: { study: string; site: string }) {
  const [page, setPage] = useState(1);
  const [state, setState] = useState('open');
  const [form, setForm] = useState('');
  const [minAge, setMinAge] = useState('');
  const q = new URLSearchParams({ page: String(page), ...(state ? { state } : {}), ...(form ? { form } : {}), ...(minAge ? { minAge } : {}) });
  const { data, error } = useSWR<{ rows: Row[]; total: number; page: number; pageSize: number; counts: Record<string, number> }>(`/api/studies/${study}/sites/${site}/queries?${q}`, getJson);
  return (
    <div className="flex flex-col gap-3">
      <div className="panel flex flex-wrap items-end gap-3">
        <div className="flex flex-col gap-1"><label htmlFor="q-state">State</label>
          <select id="q-state" value={state} onChange={(e) => { setState(e.target.value); setPage(1); }}><option value="">All</option><option value="open">open</option><option value="answered">answered</option><option value="closed">closed</option></select></div>
        <div className="flex flex-col gap-1"><label htmlFor="q-form">Form key</label><input id="q-form" value={form} onChange={(e) => { setForm(e.target.value.trim()); setPage(1); }} /></div>
        <div className="flex flex-col gap-1"><label htmlFor="q-age">Older than (days)</label><input id="q-age" type="number" min={0} value={minAge} onChange={(e) => { setMinAge(e.target.value); setPage(1); }} /></div>
        {data && <p className="text-sm">open {data.counts.open} · answered {data.counts.answered} · closed {data.counts.closed}</p>}
      </div>
      {error && <p role="alert" className="notice-error">{error.message}</p>}
      {data && (
        <section className="panel">
          <table>
            <thead><tr><th scope="col">Age (days)</th><th scope="col">State</th><th scope="col">Participant</th><th scope="col">Form</th><th scope="col">Item</th><th scope="col">Query</th><th scope="col">From</th></tr></thead>
            <tbody>
              {data.rows.map((r) => (
                <tr key={r.id}>
                  <td className="tabular-nums">{r.ageDays}</td>
                  <td><span className="tag">{r.state}</span></td>
                  <td className="font-mono text-xs">{r.participant}</td>
                  <td><FormLink href={recordHref(study, site, r)}>{r.formTitle}</FormLink></td>
                  <td className="font-mono text-xs">{r.itemPath}</td>
                  <td>{r.message}</td>
                  <td>{r.source === 'edit_check' ? 'edit check' : 'monitor'}</td>
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
