'use client';
import { useState } from 'react';
import useSWR from 'swr';
import { getJson, postJson } from '@/components/fetcher';

type Readiness = { screeningNumber: string; eligibility: string; reasons: string[]; blockers: string[] };
type Allocation = { arm: string; armLabel: string; subjectCode: string; allocatedAt: string };

/** Enrol and randomise, with a confirmation step that restates eligibility and consent. */
export function RandomisePanel({ url, onDone }: { url: string; onDone: () => void }) {
  const { data, error, mutate } = useSWR<Readiness>(url, getJson);
  const [confirming, setConfirming] = useState(false);
  const [result, setResult] = useState<Allocation | null>(null);
  const [err, setErr] = useState<string | null>(null);
  if (result)
    return (
      <section className="panel border-glide" aria-live="polite">
        <h2 className="mb-1">Randomised</h2>
        <p>Study ID <strong className="font-mono">{result.subjectCode}</strong> · allocation <strong>{result.armLabel} ({result.arm})</strong></p>
        <p className="text-xs text-ink-soft">The site&apos;s therapists have been told. Do not tell the outcome assessor.</p>
      </section>
    );
  if (error) return <p role="alert" className="notice-error">{error.message}</p>;
  if (!data) return null;
  async function go() {
    const r = await postJson<Allocation>(url, { confirm: true });
    if (r.ok) {
      setResult(r.data);
      onDone();
    } else {
      setErr(r.error.message);
      setConfirming(false);
      mutate();
    }
  }
  return (
    <section className="panel" aria-labelledby="rand-h">
      <h2 id="rand-h" className="mb-2">Enrol and randomise</h2>
      {err && <p role="alert" className="notice-error mb-2">{err}</p>}
      {data.blockers.length > 0 ? (
        <>
          <p className="mb-1 text-sm">Not yet possible:</p>
          <ul className="ml-4 list-disc text-sm">{data.blockers.map((b) => <li key={b}>{b}</li>)}</ul>
        </>
      ) : !confirming ? (
        <button type="button" className="btn" onClick={() => setConfirming(true)}>Randomise {data.screeningNumber}…</button>
      ) : (
        <div className="flex flex-col gap-2">
          <p className="text-sm">Please confirm before the allocation is revealed:</p>
          <ul className="ml-4 list-disc text-sm">
            <li>The eligibility form is submitted and the server found the patient <strong>eligible</strong>.</li>
            <li>Written informed consent was given, and the signed form is uploaded.</li>
            <li>The baseline and the injury and operation forms are submitted.</li>
          </ul>
          <div className="flex gap-2">
            <button type="button" className="btn" onClick={go}>Confirm and randomise</button>
            <button type="button" className="btn-quiet" onClick={() => setConfirming(false)}>Cancel</button>
          </div>
        </div>
      )}
    </section>
  );
}
