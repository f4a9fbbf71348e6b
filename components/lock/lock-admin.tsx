'use client';
import useSWR from 'swr';
import { useState } from 'react';
import { getJson, postJson } from '@/components/fetcher';

type Level = 'open' | 'soft' | 'hard';
type Request = { id: number; site: string | null; fromLevel: Level; toLevel: Level; reason: string; status: string; requestedBy: string | null; requestedByUserId: number; requestedAt: string; decidedBy: string | null; decidedAt: string | null };
type Overview = {
  study: { level: Level; since: string | null };
  lockedForAnalysis: boolean;
  sites: { code: string; name: string; level: Level; scope: 'study' | 'site' | null; since: string | null; own: Level; ownSince: string | null }[];
  pendingRequests: Request[];
  history: { id: number; site: string | null; action: string; fromLevel: string; toLevel: string; reason: string | null; overridden: boolean; by: string | null; role: string; at: string }[];
};
type Check = { kind: string; label: string; count: number; participants: string[]; detail?: Record<string, number> };
type Readiness = { site: string | null; clean: boolean; checks: Check[] };

const LEVEL_TEXT: Record<Level, string> = { open: 'Open', soft: 'Soft lock (no new data entry)', hard: 'Hard lock (no changes)' };
const ACTION_TEXT: Record<string, string> = { soft_lock: 'Soft lock', hard_lock: 'Hard lock', unlock_request: 'Unlock asked for', unlock: 'Unlock approved' };
const when = (iso: string | null) => (iso ? `${iso.slice(0, 16).replace('T', ' ')} UTC` : '—');

/** Readiness, lock buttons per site and for the study, unlock requests and approval, and the lock history. */
export function LockAdmin({ study, canAct, userId }: { study: string; canAct: boolean; userId: number }) {
  const base = `/api/studies/${study}/lock`;
  const ov = useSWR<Overview>(base, getJson);
  const [scope, setScope] = useState<string>('');
  const rd = useSWR<Readiness>(`${base}/readiness${scope ? `?site=${scope}` : ''}`, getJson);
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const [reason, setReason] = useState('');
  const [override, setOverride] = useState(false);

  const refresh = () => {
    ov.mutate();
    rd.mutate();
  };
  async function act(url: string, body: unknown, done: string, confirmText?: string) {
    if (confirmText && !window.confirm(confirmText)) return;
    const r = await postJson<{ snapshot?: { id: number; commitment: string } | { error: string } }>(url, body);
    // A study hard lock answers with the snapshot it took (or why it could not).
    const snap = r.ok ? r.data?.snapshot : undefined;
    const extra = !snap ? '' : 'error' in snap ? ` The snapshot was not taken: ${snap.error}` : ` Snapshot ${snap.id} taken; randomisation commitment ${snap.commitment}.`;
    setMsg(r.ok ? { ok: !snap || !('error' in snap), text: done + extra } : { ok: false, text: r.error.message });
    if (r.ok) {
      setReason('');
      setOverride(false);
    }
    refresh();
  }
  const target = scope ? `site ${scope}` : `the whole study ${study}`;
  const siteBody = scope ? { siteCode: scope } : {};
  const current: Level = scope ? ov.data?.sites.find((s) => s.code === scope)?.level ?? 'open' : ov.data?.study.level ?? 'open';
  const own: Level = scope ? ov.data?.sites.find((s) => s.code === scope)?.own ?? 'open' : ov.data?.study.level ?? 'open';

  return (
    <div className="flex flex-col gap-3">
      {msg && <p role={msg.ok ? 'status' : 'alert'} className={msg.ok ? 'notice-ok' : 'notice-error'}>{msg.text}</p>}
      {ov.error && <p role="alert" className="notice-error">{(ov.error as Error).message}</p>}

      <section className="panel" aria-labelledby="lock-state-h">
        <h2 id="lock-state-h" className="mb-2">Lock state</h2>
        {ov.data && (
          <>
            <p className="mb-2 text-sm">
              Study <strong>{study}</strong>: <strong>{LEVEL_TEXT[ov.data.study.level]}</strong>
              {ov.data.study.since && <> since {when(ov.data.study.since)}</>}
              {ov.data.lockedForAnalysis && <span className="tag ml-2">locked for analysis</span>}
            </p>
            <table>
              <thead><tr><th scope="col">Site</th><th scope="col">Name</th><th scope="col">State</th><th scope="col">Since</th><th scope="col">Set by</th></tr></thead>
              <tbody>
                {ov.data.sites.map((s) => (
                  <tr key={s.code}>
                    <td className="font-mono">{s.code}</td>
                    <td>{s.name}</td>
                    <td>{LEVEL_TEXT[s.level]}</td>
                    <td>{when(s.since)}</td>
                    <td>{s.scope === 'study' ? 'study lock' : s.scope === 'site' ? 'site lock' : '—'}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </>
        )}
      </section>

      <section className="panel" aria-labelledby="lock-scope-h">
        <h2 id="lock-scope-h" className="mb-2">Readiness and lock</h2>
        <div className="mb-3 flex flex-wrap items-center gap-2">
          <label htmlFor="lock-scope">Applies to</label>
          <select id="lock-scope" value={scope} onChange={(e) => { setScope(e.target.value); setMsg(null); }}>
            <option value="">The whole study</option>
            {ov.data?.sites.map((s) => <option key={s.code} value={s.code}>Site {s.code} · {s.name}</option>)}
          </select>
          <span className="text-sm">Now: <strong>{LEVEL_TEXT[current]}</strong></span>
        </div>
        {rd.data && (
          <>
            <p className={`mb-2 ${rd.data.clean ? 'notice-ok' : 'notice-warn'}`}>
              {rd.data.clean ? `Nothing blocks a hard lock of ${target}.` : `Before a hard lock of ${target}, these need attention (or an acknowledged override):`}
            </p>
            <table className="mb-3">
              <thead><tr><th scope="col">Check</th><th scope="col" className="text-right">Count</th><th scope="col">Participants</th></tr></thead>
              <tbody>
                {rd.data.checks.map((c) => (
                  <tr key={c.kind}>
                    <td>{c.label}{c.detail && c.count > 0 && <span className="block text-xs text-ink-soft">{Object.entries(c.detail).filter(([, n]) => n > 0).map(([k, n]) => `${k}: ${n}`).join(', ')}</span>}</td>
                    <td className="text-right tabular-nums">{c.count}</td>
                    <td className="font-mono text-xs">{c.participants.length ? c.participants.join(', ') : '—'}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </>
        )}
        {canAct && (
          <div className="flex flex-col gap-2">
            <label htmlFor="lock-reason">Reason (recorded in the history; required for an override or an unlock)</label>
            <textarea id="lock-reason" rows={2} maxLength={500} value={reason} onChange={(e) => setReason(e.target.value)} />
            {current === 'soft' && rd.data && !rd.data.clean && (
              <label className="flex items-center gap-2 text-sm">
                <input type="checkbox" checked={override} onChange={(e) => setOverride(e.target.checked)} />
                I acknowledge the blockers listed above and lock anyway.
              </label>
            )}
            <div className="flex flex-wrap gap-2">
              {current === 'open' && (
                <button type="button" className="btn" onClick={() => act(base, { level: 'soft', ...siteBody, ...(reason.trim() ? { reason } : {}) }, `Soft lock set for ${target}.`, `Soft-lock ${target}? New data entry stops; data queries can still be answered and closed.`)}>
                  Soft-lock {scope ? `site ${scope}` : 'study'}
                </button>
              )}
              {current === 'soft' && (
                <button type="button" className="btn-danger" onClick={() => act(base, { level: 'hard', ...siteBody, ...(override ? { override: true } : {}), ...(reason.trim() ? { reason } : {}) }, `Hard lock set for ${target}.`, `Hard-lock ${target}? No changes of any kind will be accepted until two data managers unlock it.`)}>
                  Hard-lock {scope ? `site ${scope}` : 'study'}
                </button>
              )}
              {own !== 'open' && (
                <button type="button" className="btn-quiet" onClick={() => act(`${base}/unlock-requests`, { ...siteBody, reason }, `Unlock asked for ${target}; a different data manager must approve it.`)}>
                  Ask to unlock {scope ? `site ${scope}` : 'study'} ({own === 'hard' ? 'to soft lock' : 'to open'})
                </button>
              )}
            </div>
          </div>
        )}
      </section>

      <section className="panel" aria-labelledby="lock-req-h">
        <h2 id="lock-req-h" className="mb-2">Unlock requests waiting for approval</h2>
        {ov.data && ov.data.pendingRequests.length === 0 && <p className="text-sm">None.</p>}
        {ov.data && ov.data.pendingRequests.length > 0 && (
          <table>
            <thead><tr><th scope="col">Applies to</th><th scope="col">Change</th><th scope="col">Asked by</th><th scope="col">When</th><th scope="col">Reason</th><th scope="col"><span className="sr-only">Action</span></th></tr></thead>
            <tbody>
              {ov.data.pendingRequests.map((r) => (
                <tr key={r.id}>
                  <td>{r.site ? `Site ${r.site}` : 'Study'}</td>
                  <td>{r.fromLevel} → {r.toLevel}</td>
                  <td>{r.requestedBy}</td>
                  <td>{when(r.requestedAt)}</td>
                  <td>{r.reason}</td>
                  <td>
                    {canAct && r.requestedByUserId !== userId ? (
                      <button type="button" className="btn-quiet" onClick={() => act(`${base}/unlock-requests/${r.id}/approve`, {}, `Unlock approved: ${r.site ? `site ${r.site}` : 'study'} is now ${r.toLevel}.`, 'Approve this unlock?')}>Approve</button>
                    ) : (
                      <span className="text-xs text-ink-soft">{canAct ? 'Another data manager approves' : ''}</span>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>

      <section className="panel" aria-labelledby="lock-hist-h">
        <h2 id="lock-hist-h" className="mb-2">History</h2>
        {ov.data && ov.data.history.length === 0 && <p className="text-sm">No lock events yet.</p>}
        {ov.data && ov.data.history.length > 0 && (
          <table>
            <thead><tr><th scope="col">When</th><th scope="col">Applies to</th><th scope="col">Event</th><th scope="col">Change</th><th scope="col">By</th><th scope="col">Reason</th></tr></thead>
            <tbody>
              {ov.data.history.map((e) => (
                <tr key={e.id}>
                  <td>{when(e.at)}</td>
                  <td>{e.site ? `Site ${e.site}` : 'Study'}</td>
                  <td>{ACTION_TEXT[e.action] ?? e.action}{e.overridden && <span className="tag ml-2">blockers acknowledged</span>}</td>
                  <td>{e.fromLevel} → {e.toLevel}</td>
                  <td>{e.by}</td>
                  <td>{e.reason ?? ''}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}
