'use client';
import { useState } from 'react';
import useSWR from 'swr';
import { getJson, postJson, sendJson } from '@/components/fetcher';
import { Pager } from '@/components/pager';

type SiteRow = { id: number; code: string; name: string; timeZone: string; recruitmentTarget: number; active: boolean };
type Page = { rows: SiteRow[]; total: number; page: number; pageSize: number };

/** The administrator's site table: create and edit sites. Paged and sorted on the server. */
export function SitesAdmin({ study }: { study: string }) {
  const [page, setPage] = useState(1);
  const [sort, setSort] = useState<'code' | 'name' | 'target'>('code');
  const { data, error, mutate } = useSWR<Page>(`/api/studies/${study}/sites?page=${page}&pageSize=20&sort=${sort}`, getJson);
  const [editing, setEditing] = useState<string | null>(null);
  const [notice, setNotice] = useState<{ kind: 'ok' | 'error'; text: string } | null>(null);

  const fieldsText = (f?: Record<string, string>) => (f ? ' ' + Object.entries(f).map(([k, v]) => `${k}: ${v}`).join('; ') : '');

  async function create(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const f = new FormData(form);
    const r = await postJson(`/api/studies/${study}/sites`, {
      code: String(f.get('code')).toUpperCase(),
      name: String(f.get('name')),
      timeZone: String(f.get('timeZone')),
      recruitmentTarget: Number(f.get('recruitmentTarget')),
    });
    if (r.ok) {
      form.reset();
      mutate();
      setNotice({ kind: 'ok', text: 'The site was created.' });
    } else setNotice({ kind: 'error', text: r.error.message + fieldsText(r.error.fields) });
  }

  async function save(code: string, e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    const r = await sendJson('PATCH', `/api/studies/${study}/sites/${code}`, {
      name: String(f.get('name')),
      timeZone: String(f.get('timeZone')),
      recruitmentTarget: Number(f.get('recruitmentTarget')),
      active: f.get('active') === 'on',
      reason: String(f.get('reason')) || undefined,
    });
    if (r.ok) {
      setEditing(null);
      mutate();
      setNotice({ kind: 'ok', text: `Site ${code} was saved.` });
    } else setNotice({ kind: 'error', text: r.error.message + fieldsText(r.error.fields) });
  }

  return (
    <div className="flex flex-col gap-4">
      {notice && <div role={notice.kind === 'error' ? 'alert' : 'status'} className={notice.kind === 'error' ? 'notice-error' : 'notice-ok'}>{notice.text}</div>}
      <form onSubmit={create} className="panel grid grid-cols-1 gap-3 md:grid-cols-5 md:items-end" aria-labelledby="new-site-h">
        <h2 id="new-site-h" className="md:col-span-5">New site</h2>
        <div className="flex flex-col gap-1">
          <label htmlFor="s-code">Code (2–10 capitals)</label>
          <input id="s-code" name="code" required pattern="[A-Za-z0-9]{2,10}" />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="s-name">Name</label>
          <input id="s-name" name="name" required maxLength={200} />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="s-tz">Time zone</label>
          <input id="s-tz" name="timeZone" required defaultValue="Europe/London" />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="s-target">Recruitment target</label>
          <input id="s-target" name="recruitmentTarget" type="number" min={0} max={100000} required defaultValue={40} />
        </div>
        <div>
          <button className="btn" type="submit">Create site</button>
        </div>
      </form>
      <section className="panel" aria-labelledby="sites-h">
        <div className="mb-2 flex items-end justify-between">
          <h2 id="sites-h">Sites</h2>
          <div className="flex flex-col gap-1">
            <label htmlFor="sort">Sort by</label>
            <select id="sort" value={sort} onChange={(e) => setSort(e.target.value as typeof sort)}>
              <option value="code">Code</option>
              <option value="name">Name</option>
              <option value="target">Target</option>
            </select>
          </div>
        </div>
        {error && <p role="alert" className="notice-error">{error.message}</p>}
        {data && (
          <>
            <table>
              <thead>
                <tr>
                  <th scope="col">Code</th>
                  <th scope="col">Name</th>
                  <th scope="col">Time zone</th>
                  <th scope="col">Target</th>
                  <th scope="col">Active</th>
                  <th scope="col">Edit</th>
                </tr>
              </thead>
              <tbody>
                {data.rows.map((s) =>
                  editing === s.code ? (
                    <tr key={s.code}>
                      <td colSpan={6}>
                        <form onSubmit={(e) => save(s.code, e)} className="flex flex-wrap items-end gap-2">
                          <span className="font-mono">{s.code}</span>
                          <label className="flex flex-col gap-1">Name<input name="name" defaultValue={s.name} required /></label>
                          <label className="flex flex-col gap-1">Time zone<input name="timeZone" defaultValue={s.timeZone} required /></label>
                          <label className="flex flex-col gap-1">Target<input name="recruitmentTarget" type="number" min={0} defaultValue={s.recruitmentTarget} /></label>
                          <label className="flex items-center gap-1"><input name="active" type="checkbox" defaultChecked={s.active} /> Active</label>
                          <label className="flex flex-col gap-1">Reason for the change<input name="reason" maxLength={500} /></label>
                          <button className="btn" type="submit">Save</button>
                          <button className="btn-quiet" type="button" onClick={() => setEditing(null)}>Cancel</button>
                        </form>
                      </td>
                    </tr>
                  ) : (
                    <tr key={s.code}>
                      <td className="font-mono">{s.code}</td>
                      <td>{s.name}</td>
                      <td>{s.timeZone}</td>
                      <td className="tabular-nums">{s.recruitmentTarget}</td>
                      <td>{s.active ? 'yes' : 'no'}</td>
                      <td>
                        <button type="button" className="btn-quiet" onClick={() => setEditing(s.code)} aria-label={`Edit site ${s.code}`}>Edit</button>
                      </td>
                    </tr>
                  ),
                )}
              </tbody>
            </table>
            <Pager page={data.page} pageSize={data.pageSize} total={data.total} onPage={setPage} />
          </>
        )}
      </section>
    </div>
  );
}
