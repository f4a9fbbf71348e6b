'use client';
import { useState } from 'react';
import useSWR from 'swr';
import { getJson, postJson, sendJson, type ApiError } from '@/components/fetcher';
import { Pager } from '@/components/pager';
import { ROLES, ROLE_LABELS, type Role } from '@/lib/roles';

type Row = { id: number; name: string; email: string; status: string; lastLoginAt: string | null; memberships: { id: number; role: Role; site: string | null }[] };
type Page = { rows: Row[]; total: number; page: number; pageSize: number };

/** The administrator's user table: invite, deactivate, add and revoke roles. Paged on the server. */
export function UsersAdmin({ study, sites }: { study: string; sites: string[] }) {
  const [page, setPage] = useState(1);
  const [search, setSearch] = useState('');
  const url = `/api/studies/${study}/users?page=${page}&pageSize=20${search ? `&q=${encodeURIComponent(search)}` : ''}`;
  const { data, error, mutate, isLoading } = useSWR<Page>(url, getJson);
  const [notice, setNotice] = useState<{ kind: 'ok' | 'error'; text: string; fields?: Record<string, string> } | null>(null);

  const report = (r: { ok: true } | { ok: false; error: ApiError }, okText: string) => {
    setNotice(r.ok ? { kind: 'ok', text: okText } : { kind: 'error', text: r.error.message, fields: r.error.fields });
    if (r.ok) mutate();
  };

  async function invite(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = e.currentTarget;
    const f = new FormData(form);
    const body = { email: String(f.get('email')), name: String(f.get('name')), role: String(f.get('role')), site: String(f.get('site')) || null };
    const r = await postJson<{ emailSent: boolean }>(`/api/studies/${study}/invitations`, body);
    if (r.ok) form.reset();
    report(r, r.ok && !r.data.emailSent ? 'Saved, but the e-mail could not be sent: use “Send new link”.' : `Invitation sent to ${body.email}.`);
  }

  async function deactivate(u: Row) {
    const reason = window.prompt(`Reason for deactivating ${u.name}:`);
    if (!reason) return;
    report(await postJson(`/api/studies/${study}/users/${u.id}/deactivate`, { reason }), `${u.name} can no longer sign in.`);
  }
  async function resend(u: Row) {
    report(await postJson(`/api/studies/${study}/users/${u.id}/invitations`, {}), `A new link was sent to ${u.email}.`);
  }
  async function revoke(u: Row, m: Row['memberships'][number]) {
    const reason = window.prompt(`Reason for revoking ${ROLE_LABELS[m.role]}${m.site ? ` at ${m.site}` : ''} from ${u.name}:`);
    if (!reason) return;
    report(await sendJson('DELETE', `/api/studies/${study}/memberships/${m.id}`, { reason }), 'The role was revoked.');
  }
  async function addRole(u: Row, e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    report(await postJson(`/api/studies/${study}/memberships`, { userId: u.id, role: String(f.get('role')), site: String(f.get('site')) || null }), 'The role was added.');
  }

  return (
    <div className="flex flex-col gap-4">
      {notice && (
        <div role={notice.kind === 'error' ? 'alert' : 'status'} className={notice.kind === 'error' ? 'notice-error' : 'notice-ok'}>
          {notice.text}
          {notice.fields && (
            <ul className="ml-4 list-disc">
              {Object.entries(notice.fields).map(([k, v]) => (
                <li key={k}>
                  {k}: {v}
                </li>
              ))}
            </ul>
          )}
        </div>
      )}
      <form onSubmit={invite} className="panel grid grid-cols-1 gap-3 md:grid-cols-5 md:items-end" aria-labelledby="invite-h">
        <h2 id="invite-h" className="md:col-span-5">Invite a person</h2>
        <div className="flex flex-col gap-1">
          <label htmlFor="inv-name">Name</label>
          <input id="inv-name" name="name" required maxLength={200} />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="inv-email">E-mail</label>
          <input id="inv-email" name="email" type="email" required maxLength={254} />
        </div>
        <RoleSelect id="inv-role" />
        <SiteSelect id="inv-site" sites={sites} />
        <div>
          <button className="btn" type="submit">Send invitation</button>
        </div>
      </form>
      <section className="panel" aria-labelledby="users-h">
        <div className="mb-2 flex items-end justify-between gap-3">
          <h2 id="users-h">People in {study}</h2>
          <div className="flex flex-col gap-1">
            <label htmlFor="user-search">Search name or e-mail</label>
            <input id="user-search" value={search} onChange={(e) => { setSearch(e.target.value); setPage(1); }} />
          </div>
        </div>
        {error && <p role="alert" className="notice-error">{error.message}</p>}
        {isLoading && <p className="text-sm text-ink-faint">Loading…</p>}
        {data && (
          <>
            <table>
              <thead>
                <tr>
                  <th scope="col">Name</th>
                  <th scope="col">E-mail</th>
                  <th scope="col">Account</th>
                  <th scope="col">Roles</th>
                  <th scope="col">Actions</th>
                </tr>
              </thead>
              <tbody>
                {data.rows.map((u) => (
                  <tr key={u.id}>
                    <td>{u.name}</td>
                    <td className="font-mono text-xs">{u.email}</td>
                    <td>
                      <span className="tag">{u.status}</span>
                    </td>
                    <td>
                      <ul className="flex flex-col gap-1">
                        {u.memberships.map((m) => (
                          <li key={m.id} className="flex items-center gap-2">
                            {ROLE_LABELS[m.role]} · {m.site ?? 'all sites'}
                            {u.status !== 'deactivated' && (
                              <button type="button" className="text-xs text-danger underline" onClick={() => revoke(u, m)} aria-label={`Revoke ${ROLE_LABELS[m.role]} from ${u.name}`}>
                                revoke
                              </button>
                            )}
                          </li>
                        ))}
                      </ul>
                      {u.status !== 'deactivated' && (
                        <details className="mt-1">
                          <summary className="cursor-pointer text-xs">Add a role</summary>
                          <form onSubmit={(e) => addRole(u, e)} className="mt-1 flex flex-wrap items-end gap-2">
                            <RoleSelect id={`add-role-${u.id}`} />
                            <SiteSelect id={`add-site-${u.id}`} sites={sites} />
                            <button className="btn-quiet" type="submit">Add</button>
                          </form>
                        </details>
                      )}
                    </td>
                    <td>
                      <div className="flex flex-col items-start gap-1">
                      {u.status === 'invited' && (
                        <button type="button" className="btn-quiet" onClick={() => resend(u)}>Send new link</button>
                      )}
                      {u.status !== 'deactivated' && (
                        <button type="button" className="btn-danger" onClick={() => deactivate(u)}>Deactivate</button>
                      )}
                      </div>
                    </td>
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

function RoleSelect({ id }: { id: string }) {
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id}>Role</label>
      <select id={id} name="role" required defaultValue="coordinator">
        {ROLES.map((r) => (
          <option key={r} value={r}>{ROLE_LABELS[r]}</option>
        ))}
      </select>
    </div>
  );
}

function SiteSelect({ id, sites }: { id: string; sites: string[] }) {
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id}>Site</label>
      <select id={id} name="site" defaultValue="">
        <option value="">All sites (study-wide)</option>
        {sites.map((s) => (
          <option key={s} value={s}>{s}</option>
        ))}
      </select>
    </div>
  );
}
