import type { Metadata } from 'next';
import Link from 'next/link';
import { FormLink } from '@/components/crf/form-link';
import { notFound } from 'next/navigation';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { getParticipant } from '@/lib/participants';
import { participantStatusLabel } from '@/lib/participants/labels';
import { casebook } from '@/lib/crf/casebook';
import { AppError } from '@/lib/errors';
import { CasebookActions } from '@/components/participants/casebook-actions';
import { participantVisits } from '@/lib/visits';
import { isBlinded } from '@/lib/crf/access';
import { todayIn } from '@/lib/dates';

export const metadata: Metadata = { title: 'Casebook' };
const READERS = ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] as const;

export default async function CasebookPage({ params }: { params: Promise<{ study: string; site: string; participant: string }> }) {
  const { study: code, site: siteCode, participant } = await params;
  const { study, site, roles } = await requireStudyAccess(code, { site: siteCode, roles: READERS });
  const id = Number(participant);
  if (!Number.isSafeInteger(id) || id <= 0) notFound();
  let p;
  try {
    p = await getParticipant(study.id, site!.id, id);
  } catch (e) {
    if (e instanceof AppError && e.code === 'not_found') notFound();
    throw e;
  }
  const book = await casebook(study, p.id, roles);
  const visits = await participantVisits(p.id, todayIn(site!.timeZone), isBlinded(roles, study.config));
  const base = `/studies/${study.code}/sites/${site!.code}/participants/${p.id}`;
  return (
    <div>
      <ContextBar study={study} site={site} roles={roles} />
      <h1 className="mb-1">Casebook {p.subjectCode ?? p.screeningNumber}</h1>
      <p className="mb-3 text-sm text-ink-soft">Screening number {p.screeningNumber} · status {participantStatusLabel(p.status)} · <Link href={`${base}/audit`}>all changes</Link></p>
      <div className="mb-3 grid gap-3 md:grid-cols-2">
        {book.allocation && (
          <section className="panel border-glide" aria-labelledby="alloc-h">
            <h2 id="alloc-h" className="text-base">Allocation</h2>
            <p>
              <strong>{book.allocation.armLabel} ({book.allocation.arm})</strong> · randomised {book.allocation.allocatedAt.slice(0, 10)}
              {p.unblinded && <span className="tag ml-2">emergency unblinded</span>}
            </p>
          </section>
        )}
        {book.uploads.length > 0 && (
          <section className="panel" aria-labelledby="files-h">
            <h2 id="files-h" className="text-base">Signed consent forms</h2>
            <ul className="text-sm">
              {book.uploads.map((u) => (
                <li key={u.id}>
                  <a href={`/api/studies/${study.code}/sites/${site!.code}/uploads/${u.id}`}>{u.mime} · {Math.ceil(u.sizeBytes / 1024)} kB</a>{' '}
                  <span className="font-mono text-xs text-ink-faint" title="SHA-256">{u.sha256.slice(0, 16)}…</span>
                </li>
              ))}
            </ul>
          </section>
        )}
      </div>
      <CasebookActions
        api={`/api/studies/${study.code}/sites/${site!.code}/participants/${p.id}`}
        canRandomise={roles.includes('coordinator') && !p.subjectCode && p.status !== 'declined'}
        canSign={roles.includes('investigator')}
        canUnblind={!!book.allocation && roles.some((r) => ((study.config.unblindingRoles as string[] | undefined) ?? ['investigator']).includes(r))}
      />
      {visits.length > 0 && (
        <section className="panel mt-3" aria-labelledby="visits-h">
          <h2 id="visits-h" className="mb-2 text-base">Visits (day 0 = repair)</h2>
          <table>
            <thead><tr><th scope="col">Visit</th><th scope="col">Window</th><th scope="col">Target</th><th scope="col">Status</th><th scope="col">Forms</th></tr></thead>
            <tbody>
              {visits.map((v) => (
                <tr key={v.key}>
                  <td>{v.label}</td>
                  <td className="tabular-nums">{v.earliest} – {v.latest}</td>
                  <td className="tabular-nums">{v.target}</td>
                  <td><span className="tag">{v.status.replace(/-/g, ' ')}</span>{v.completedOn && <span className="ml-1 text-xs">on {v.completedOn}</span>}</td>
                  <td>{v.forms.map((f) => <FormLink key={f} className="mr-2" href={`${base}/forms/${f}?visit=${v.key}`}>{f.replace('_', ' ')}</FormLink>)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </section>
      )}
      <section className="panel mt-3">
        <table>
          <thead>
            <tr><th scope="col">Form</th><th scope="col">Version in use</th><th scope="col">Record</th></tr>
          </thead>
          <tbody>
            {book.forms.map((f) => {
              const recs = book.records.filter((r) => r.formKey === f.key);
              return (
                <tr key={f.key}>
                  <td><FormLink href={`${base}/forms/${f.key}`}>{f.title}</FormLink></td>
                  <td>v{f.version}</td>
                  <td>{recs.length ? recs.map((r) => `${r.status} (v${r.formVersion}${r.visitKey ? `, ${r.visitKey}` : ''})`).join('; ') : 'not started'}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </section>
    </div>
  );
}
