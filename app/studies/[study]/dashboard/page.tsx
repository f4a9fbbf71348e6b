import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { sitesFor } from '@/lib/auth/principal';
import { dashboard } from '@/lib/monitoring/dashboard';
import { RecruitmentChart } from '@/components/monitoring/recruitment-chart';
import { SaeList } from '@/components/monitoring/sae-list';

export const metadata: Metadata = { title: 'Study dashboard' };
const pct = (a: number, b: number) => (b ? `${Math.round((100 * a) / b)} %` : '—');

export default async function DashboardPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { study, principal, roles } = await requireStudyAccess(code, { roles: ['investigator', 'data_manager', 'monitor'] });
  const d = await dashboard(study, sitesFor(principal, study.id, ['investigator', 'data_manager', 'monitor']), roles);
  return (
    <div className="flex flex-col gap-4">
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1>Study dashboard</h1>
      <p className="text-sm text-ink-soft">{d.lockedForAnalysis ? 'Shown by arm: the study is locked and the allocation revealed for analysis.' : d.byArm ? 'Shown by arm (allowed for your role by the study).' : 'Pooled over both arms: nothing here is broken down by allocation.'} Figures as of {d.today}.</p>
      <section className="panel" aria-labelledby="rec-h">
        <h2 id="rec-h" className="mb-2">Recruitment against target</h2>
        <table>
          <thead><tr><th scope="col">Site</th><th scope="col" className="text-right">Screened</th><th scope="col" className="text-right">Eligible</th><th scope="col" className="text-right">Consented</th><th scope="col" className="text-right">Randomised</th><th scope="col" className="text-right">Target</th><th scope="col" className="text-right">Reached</th></tr></thead>
          <tbody>
            {d.recruitment.map((r) => (
              <tr key={r.site}><td>{r.site} · {r.name}</td><td className="text-right tabular-nums">{r.screened}</td><td className="text-right tabular-nums">{r.eligible}</td><td className="text-right tabular-nums">{r.consented}</td><td className="text-right tabular-nums">{r.randomised}</td><td className="text-right tabular-nums">{r.target}</td><td className="text-right tabular-nums">{pct(r.randomised, r.target)}</td></tr>
            ))}
          </tbody>
          <tfoot><tr className="font-semibold"><td>All</td><td className="text-right">{d.totals.screened}</td><td className="text-right">{d.totals.eligible}</td><td className="text-right">{d.totals.consented}</td><td className="text-right">{d.totals.randomised}</td><td className="text-right">{d.totals.target}</td><td className="text-right">{pct(d.totals.randomised, d.totals.target)}</td></tr></tfoot>
        </table>
        <p className="mt-2 text-sm">
          Recent rate {(d.projection.rate * 30.44).toFixed(1)} per month (95 % CI {(d.projection.rateCI[0] * 30.44).toFixed(1)}–{(d.projection.rateCI[1] * 30.44).toFixed(1)}, Poisson).{' '}
          {d.projection.projected ? `Target projected on ${d.projection.projected} (95 % interval ${d.projection.projectedCI[0] ?? '—'} to ${d.projection.projectedCI[1] ?? 'not estimable'}).` : 'No recent randomisations: no projection.'}
        </p>
        <RecruitmentChart points={d.recruitmentChart} />
        {d.exclusionReasons.length > 0 && (
          <p className="mt-1 text-sm">Most frequent exclusion reasons: {d.exclusionReasons.map((r) => `${r.reason.split(':')[0].slice(0, 80)} (${r.n})`).join('; ')}</p>
        )}
      </section>
      <div className="grid gap-4 md:grid-cols-2">
        <section className="panel" aria-labelledby="fu-h">
          <h2 id="fu-h" className="mb-2">Follow-up completeness</h2>
          <table>
            <thead><tr><th scope="col">Visit</th><th scope="col">In window</th><th scope="col">Out of window</th><th scope="col">Overdue</th><th scope="col">Missed</th></tr></thead>
            <tbody>{d.completeness.map((c) => <tr key={c.key}><td>{c.label}</td><td>{c.inWindow}</td><td>{c.outOfWindow}</td><td>{c.overdue}</td><td>{c.missed}</td></tr>)}</tbody>
          </table>
        </section>
        <section className="panel" aria-labelledby="q-h">
          <h2 id="q-h" className="mb-2">Open queries and safety</h2>
          <table>
            <thead><tr><th scope="col">Site</th><th scope="col">Open</th><th scope="col">&lt; 7 days</th><th scope="col">7–30 days</th><th scope="col">&gt; 30 days</th></tr></thead>
            <tbody>{d.openQueries.map((q) => <tr key={q.site}><td>{q.site}</td><td>{q.total}</td><td>{q.under7}</td><td>{q.from7to30}</td><td>{q.over30}</td></tr>)}</tbody>
          </table>
          <p className="mt-2 text-sm">Adverse events {d.safety.adverseEvents} · serious {d.safety.serious} · awaiting follow-up {d.safety.seriousAwaiting} · <strong className={d.safety.seriousOverdue ? 'text-danger' : ''}>past the 24-hour deadline {d.safety.seriousOverdue}</strong></p>
        </section>
      </div>
      <section className="panel" aria-labelledby="sae-h">
        <h2 id="sae-h" className="mb-2">Serious adverse events awaiting follow-up</h2>
        <p className="mb-2 text-sm text-ink-soft">Each must be reported within 24 hours of the site becoming aware. Clinical decisions stay with the treating clinicians.</p>
        <SaeList study={study.code} canFollowUp={roles.includes('investigator')} />
      </section>
      {d.blindingIntegrity && (
        <section className="panel" aria-labelledby="bi-h">
          <h2 id="bi-h" className="mb-2">Blinding integrity</h2>
          <p className="text-sm">
            Assessors named the actual programme in {d.blindingIntegrity.correct} of {d.blindingIntegrity.guesses} guesses
            {d.blindingIntegrity.proportion !== null && d.blindingIntegrity.ci95 ? ` (${(100 * d.blindingIntegrity.proportion).toFixed(0)} %, Wilson 95 % CI ${(100 * d.blindingIntegrity.ci95[0]).toFixed(0)}–${(100 * d.blindingIntegrity.ci95[1]).toFixed(0)} %)` : ''}; “cannot tell” {d.blindingIntegrity.cannotTell}. Around 50 % suggests the blinding held.
          </p>
        </section>
      )}
      <section className="panel" aria-labelledby="consort-h">
        <h2 id="consort-h" className="mb-2">CONSORT flow (live)</h2>
        {/* The SVG is built by lib/monitoring/consort.ts from counts, with every text XML-escaped. */}
        <div className="overflow-x-auto" dangerouslySetInnerHTML={{ __html: d.consortSvg }} />
      </section>
    </div>
  );
}
