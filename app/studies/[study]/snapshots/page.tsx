import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { TakeSnapshotButton } from '@/components/snapshots/take-snapshot-button';
import { isLockedForAnalysis } from '@/lib/lock';
import { listSnapshots, SNAPSHOT_READ_ROLES } from '@/lib/snapshot';
import { readManifest } from '@/lib/snapshot/read';

export const metadata: Metadata = { title: 'Locked datasets' };

const FORMATS = [
  { format: 'xlsx', label: 'Spreadsheet (.xlsx)' },
  { format: 'csv', label: 'CSV files (.zip)' },
  { format: 'odm', label: 'CDISC ODM 1.3.2 (.xml)' },
] as const;
const PROFILES = [
  { profile: 'full', label: 'full' },
  { profile: 'deidentified', label: 'de-identified' },
] as const;

export default async function SnapshotsPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { principal, study, roles } = await requireStudyAccess(code, { roles: SNAPSHOT_READ_ROLES });
  const snapshots = await listSnapshots(study.id);
  const locked = await isLockedForAnalysis(study.id);
  const manifests = await Promise.all(snapshots.map((s) => readManifest(s.storagePrefix).catch(() => null)));
  return (
    <div className="flex flex-col gap-4">
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1>Locked datasets</h1>
      <p className="text-sm text-ink-soft">
        Each snapshot is an immutable copy of the whole study in object storage with a manifest of SHA-256 checksums. Exports are made from the
        snapshot, never from the live data, and every download is recorded in the access log. A snapshot reveals the allocation.
      </p>
      {roles.includes('data_manager') && locked && <TakeSnapshotButton study={study.code} />}
      {snapshots.length === 0 && <p className="panel text-sm">No snapshot yet: the data manager's hard lock of the study takes it (page: Database lock).</p>}
      {snapshots.map((s, i) => {
        const m = manifests[i];
        const c = s.commitment;
        return (
          <section key={s.id} className="panel" aria-labelledby={`snap-${s.id}`}>
            <h2 id={`snap-${s.id}`} className="mb-2">Snapshot {s.id} · {s.createdAt.replace('T', ' ').slice(0, 19)} UTC</h2>
            <dl className="mb-3 grid grid-cols-[14rem_1fr] gap-1 text-sm">
              <dt>Taken by</dt><dd>{s.createdBy ?? '—'}</dd>
              <dt>Snapshot hash (SHA-256)</dt><dd className="break-all font-mono text-xs">{s.snapshotHash}</dd>
              <dt>Randomisation commitment</dt>
              <dd>
                {c.status === 'verified' && <strong>Verified: the stored schedule matches the commitment made at activation.</strong>}
                {c.status === 'failed' && <strong className="text-danger">Failed: the stored schedule does not match the commitment made at activation.</strong>}
                {c.status === 'not_activated' && 'Randomisation was not activated.'}
                {c.commitment && <span className="block break-all font-mono text-xs">commitment {c.commitment}<br />recomputed {c.recomputed}</span>}
              </dd>
            </dl>
            <div className="mb-3 flex flex-wrap gap-2" role="group" aria-label={`Downloads of snapshot ${s.id}`}>
              {FORMATS.flatMap((f) =>
                PROFILES.map((p) => (
                  <a key={`${f.format}-${p.profile}`} className="btn no-underline" href={`/api/studies/${study.code}/snapshots/${s.id}/export?format=${f.format}&profile=${p.profile}`} download>
                    {f.label}, {p.label}
                  </a>
                )),
              )}
            </div>
            <details>
              <summary className="cursor-pointer text-sm">Manifest ({m ? m.files.length : '?'} files)</summary>
              {m ? (
                <table className="mt-2">
                  <thead><tr><th scope="col">File</th><th scope="col" className="text-right">Rows</th><th scope="col" className="text-right">Bytes</th><th scope="col">SHA-256</th></tr></thead>
                  <tbody>
                    {m.files.map((f) => (
                      <tr key={f.name}><td className="font-mono text-xs">{f.name}</td><td className="text-right tabular-nums">{f.rows}</td><td className="text-right tabular-nums">{f.bytes}</td><td className="break-all font-mono text-xs">{f.sha256}</td></tr>
                    ))}
                  </tbody>
                </table>
              ) : (
                <p className="notice-error mt-2 text-sm">The manifest could not be read from object storage.</p>
              )}
            </details>
          </section>
        );
      })}
    </div>
  );
}
