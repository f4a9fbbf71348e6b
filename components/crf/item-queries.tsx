'use client';
import { useState } from 'react';
import useSWR from 'swr';
import { getJson, postJson } from '@/components/fetcher';

type Q = { id: number; recordId: number; itemPath: string; state: string; message: string; messages: { kind: string; role: string; text: string; at: string }[] };

/** Queries on one item, with the actions the reader's role has: open and verify (monitor), answer (site staff), close. */
export function ItemQueries({ queriesUrl, verifyUrl, recordId, path, canOpen, canAnswer }: { queriesUrl: string; verifyUrl: string; recordId: number; path: string; canOpen: boolean; canAnswer: boolean }) {
  const { data, mutate } = useSWR<{ rows: Q[] }>(`${queriesUrl}?pageSize=200`, getJson);
  const [text, setText] = useState('');
  const [msg, setMsg] = useState<{ ok: boolean; text: string } | null>(null);
  const mine = (data?.rows ?? []).filter((q) => q.recordId === recordId && q.itemPath === path);
  const act = async (url: string, body: unknown, ok: string) => {
    const r = await postJson(url, body);
    setMsg(r.ok ? { ok: true, text: ok } : { ok: false, text: r.error.message });
    if (r.ok) setText('');
    mutate();
  };
  return (
    <div className="mt-3 border-t border-line pt-2">
      <h3 className="mb-1 text-sm">Data queries on this item</h3>
      {msg && <p role={msg.ok ? 'status' : 'alert'} className={msg.ok ? 'notice-ok' : 'notice-error'}>{msg.text}</p>}
      {mine.length === 0 && <p className="text-sm text-ink-faint">None.</p>}
      <ul className="flex flex-col gap-2">
        {mine.map((q) => (
          <li key={q.id} className="rounded border border-line p-2 text-sm">
            <p><span className="tag mr-1">{q.state}</span>{q.message}</p>
            <ol className="ml-4 list-decimal text-xs text-ink-soft">{q.messages.slice(1).map((m, i) => <li key={i}>{m.kind} by {m.role}: {m.text}</li>)}</ol>
            <div className="mt-1 flex flex-wrap gap-2">
              {canAnswer && q.state === 'open' && <button type="button" className="btn-quiet" disabled={!text} onClick={() => act(`${queriesUrl}/${q.id}/answer`, { text }, 'Answer sent.')}>Answer with the text below</button>}
              {canOpen && q.state !== 'closed' && <button type="button" className="btn-quiet" onClick={() => act(`${queriesUrl}/${q.id}/close`, text ? { text } : {}, 'Query closed.')}>Close</button>}
              {canOpen && q.state !== 'open' && <button type="button" className="btn-quiet" disabled={!text} onClick={() => act(`${queriesUrl}/${q.id}/reopen`, { text }, 'Query re-opened.')}>Re-open with the text below</button>}
            </div>
          </li>
        ))}
      </ul>
      {(canOpen || canAnswer) && (
        <div className="mt-2 flex flex-col gap-1">
          <label htmlFor="query-text">{canOpen ? 'Query text, or a closing note' : 'Your answer'}</label>
          <textarea id="query-text" rows={2} maxLength={2000} value={text} onChange={(e) => setText(e.target.value)} />
          {canOpen && (
            <div className="flex gap-2">
              <button type="button" className="btn" disabled={text.trim().length < 5} onClick={() => act(queriesUrl, { recordId, itemPath: path, message: text }, 'Query opened; the site has been e-mailed.')}>Open a query</button>
              <button type="button" className="btn-quiet" onClick={() => act(verifyUrl, { recordId, itemPath: path }, 'Marked as verified against source.')}>Mark verified</button>
            </div>
          )}
        </div>
      )}
    </div>
  );
}
