'use client';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { postJson } from '@/components/fetcher';

/** The data manager's button that takes the snapshot again under the hard lock (the lock itself takes the first). */
export function TakeSnapshotButton({ study }: { study: string }) {
  const router = useRouter();
  const [busy, setBusy] = useState(false);
  const [err, setErr] = useState<string | null>(null);
  async function take() {
    if (!window.confirm('Take another immutable snapshot of the locked study now?')) return;
    setBusy(true);
    setErr(null);
    const r = await postJson(`/api/studies/${study}/snapshots`, {});
    setBusy(false);
    if (!r.ok) setErr(r.error.message);
    router.refresh();
  }
  return (
    <div className="flex flex-col gap-2">
      {err && <p role="alert" className="notice-error">{err}</p>}
      <p><button type="button" className="btn" onClick={take} disabled={busy}>{busy ? 'Taking the snapshot…' : 'Take the snapshot again'}</button></p>
    </div>
  );
}
