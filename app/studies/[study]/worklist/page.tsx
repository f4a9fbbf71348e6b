import type { Metadata } from 'next';
import { FormLink } from '@/components/crf/form-link';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { worklistFor } from '@/lib/visits/worklist-for';

export const metadata: Metadata = { title: 'Visits due' };
const STATUS: Record<string, string> = { upcoming: 'upcoming', open: 'window open', overdue: 'overdue' };
// The link's accessible name starts with its visible words (WCAG 2.5.3), then says which visit and participant.
const linkText = (form: string) => (form === 'follow_up' ? 'assessment' : form.replace('_', ' '));

export default async function WorklistPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { study, principal, roles } = await requireStudyAccess(code, { roles: ['assessor', 'coordinator'] });
  const kind = roles.includes('assessor') ? 'assessor' : 'coordinator';
  const rows = await worklistFor(study, principal, kind);
  return (
    <div>
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1 className="mb-1">Visits due</h1>
      <p className="mb-3 text-sm text-ink-soft">{kind === 'assessor' ? 'Blinded outcome visits whose window is open or has passed, most urgent first.' : 'Upcoming and overdue visits at your sites, most urgent first.'}</p>
      <section className="panel">
        {rows.length === 0 ? (
          <p>Nothing is due.</p>
        ) : (
          <table>
            <thead>
              <tr><th scope="col">Participant</th><th scope="col">Site</th><th scope="col">Visit</th><th scope="col">Window</th><th scope="col">Target</th><th scope="col">Status</th><th scope="col">Enter</th></tr>
            </thead>
            <tbody>
              {rows.map((r) => (
                <tr key={r.visitId}>
                  <td className="font-mono">{r.subjectCode}</td>
                  <td>{r.siteCode}</td>
                  <td>{r.label}</td>
                  <td className="tabular-nums">{r.earliest} – {r.latest}</td>
                  <td className="tabular-nums">{r.target}</td>
                  <td><span className={`tag ${r.status === 'overdue' ? 'border-danger text-danger' : ''}`}>{STATUS[r.status] ?? r.status}</span></td>
                  <td>
                    {r.forms.filter((f) => kind === 'coordinator' || f === 'follow_up').map((f) => (
                      <FormLink key={f} href={`/studies/${study.code}/sites/${r.siteCode}/participants/${r.participantId}/forms/${f}?visit=${r.visitKey}`} ariaLabel={`${linkText(f)}: ${r.label} for ${r.subjectCode}`}>
                        {linkText(f)}
                      </FormLink>
                    ))}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}
