'use client';
import useSWR from 'swr';
import { getJson } from '@/components/fetcher';

type Row = { id: number; at: string; actor: string | null; role: string | null; action: string; itemPath: string | null; oldValue: unknown; newValue: unknown; reason: string | null; formVersion: number | null };

/** An audited value as text ('—' when absent). */
export const show = (v: unknown) => (v === null || v === undefined ? '—' : typeof v === 'string' ? v : JSON.stringify(v));

/** Shows a UTC instant in the site's time zone, with UTC on hover. */
export function SiteTime({ iso, timeZone }: { iso: string; timeZone: string }) {
  const local = new Intl.DateTimeFormat('en-GB', { timeZone, dateStyle: 'medium', timeStyle: 'short' }).format(new Date(iso));
  return <time dateTime={iso} title={`${iso.replace('T', ' ').slice(0, 19)} UTC`}>{local}</time>;
}

/** The change history of one item: who, role, when, old → new, reason. */
export function ItemHistory({ auditUrl, path, timeZone, onClose, children }: { auditUrl: string; path: string; timeZone: string; onClose: () => void; children?: React.ReactNode }) {
  const { data, error } = useSWR<{ rows: Row[]; total: number }>(auditUrl, getJson);
  return (
    <section role="dialog" aria-modal="false" aria-labelledby="history-title" className="panel border-glide">
      <div className="mb-2 flex items-center justify-between">
        <h2 id="history-title" className="text-base">History of <code className="font-mono text-sm">{path}</code></h2>
        <button type="button" className="btn-quiet" onClick={onClose}>Close</button>
      </div>
      {error && <p role="alert" className="notice-error">{error.message}</p>}
      {data && data.rows.length === 0 && <p className="text-sm">No changes recorded for this item yet.</p>}
      {data && data.rows.length > 0 && (
        <table>
          <thead>
            <tr><th scope="col">When ({timeZone})</th><th scope="col">Who</th><th scope="col">Role</th><th scope="col">Old → new</th><th scope="col">Reason</th></tr>
          </thead>
          <tbody>
            {data.rows.map((r) => (
              <tr key={r.id}>
                <td><SiteTime iso={r.at} timeZone={timeZone} /></td>
                <td>{r.actor ?? 'system'}</td>
                <td>{r.role ?? '—'}</td>
                <td><span className="text-ink-faint line-through">{show(r.oldValue)}</span> → <strong>{show(r.newValue)}</strong></td>
                <td>{r.reason ?? (r.action === 'item' ? 'first entry' : '—')}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {children}
    </section>
  );
}
