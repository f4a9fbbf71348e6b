import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { requireStudyAccess } from '@/lib/auth/gates';
import { isBlinded } from '@/lib/crf/access';
import { REPORT_ROLES, trialReport } from '@/lib/report';
import { TOTAL, type TrialReport } from '@/lib/report/tables';
import { DASH, formatCI, formatNumber } from '@/lib/report/format';
import { ContextBar } from '@/components/context-bar';
import { PrimaryChart } from '@/components/report/primary-chart';

export const metadata: Metadata = { title: 'Trial report' };

const num = 'text-right tabular-nums';

function SourceNotice({ source }: { source: TrialReport['source'] }) {
  if (source.kind === 'snapshot') {
    return <p className="notice-ok">Computed from the locked snapshot ({source.label}), {source.asOf}.</p>;
  }
  return (
    <p className="notice-warn" role="note">
      <strong>Provisional.</strong> These tables are computed from the live database as of {source.asOf}; data can still change.
      The tables are final only when computed from a locked snapshot of the study.
    </p>
  );
}

export default async function ReportPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { study, roles, principal } = await requireStudyAccess(code, { roles: REPORT_ROLES });
  // Every table is by arm: a reader blinded in this study does not learn that the page exists.
  if (isBlinded(roles, study.config)) notFound();
  const r = await trialReport(study, roles, { userId: principal.id });
  const cols = [...r.arms.map((a) => a.code), TOTAL];
  const head = (g: string) => (g === TOTAL ? 'Total' : `${r.arms.find((a) => a.code === g)?.label ?? g} (${g})`);
  const armLabel = (c: string) => r.arms.find((a) => a.code === c)?.label ?? c;
  const { primary, secondary } = r;
  const schedule = (study.config.schedule ?? []) as { key: string; label: string }[];
  const visitLabel = (key: string) => schedule.find((v) => v.key === key)?.label ?? key;
  return (
    <div className="flex flex-col gap-4">
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1>Trial report</h1>
      <SourceNotice source={r.source} />
      <p className="text-sm">
        Randomised: {r.arms.map((a) => `${a.label} ${r.randomised[a.code] ?? 0}`).join(' · ')} · total {r.randomised[TOTAL] ?? 0}. Analysed in the arm allocated;
        comparisons are {r.arms.length === 2 ? `${r.arms[1].code} − ${r.arms[0].code}` : 'between two arms'}. <Link href={`/studies/${study.code}/sample-size`}>Sample-size calculator</Link>
      </p>

      <section className="panel" aria-labelledby="base-h">
        <h2 id="base-h" className="mb-2">Baseline characteristics</h2>
        <table>
          <thead>
            <tr>
              <th scope="col">Characteristic</th>
              {cols.map((g) => <th key={g} scope="col" className={num}>{head(g)}<br /><span className="font-normal">n = {r.randomised[g] ?? 0}</span></th>)}
            </tr>
          </thead>
          <tbody>
            {r.baseline.map((row) =>
              row.kind === 'continuous' ? (
                <tr key={row.variable}>
                  <th scope="row" className="font-normal">{row.label}, {row.summary === 'mean_sd' ? 'mean (SD)' : 'median [IQR]'}</th>
                  {cols.map((g) => <td key={g} className={num}>{row.cells[g].text}{row.cells[g].missing > 0 && <span className="text-ink-faint"> · missing {row.cells[g].missing}</span>}</td>)}
                </tr>
              ) : (
                [
                  <tr key={row.variable}>
                    <th scope="rowgroup" colSpan={cols.length + 1} className="border-b-0 pt-3 text-ink">{row.label}, n (%)</th>
                  </tr>,
                  ...row.levels.map((l) => (
                    <tr key={`${row.variable}-${l.code}`}>
                      <th scope="row" className="pl-6 font-normal">{l.label}</th>
                      {cols.map((g) => <td key={g} className={num}>{l.cells[g].text}</td>)}
                    </tr>
                  )),
                  ...(cols.some((g) => row.missing[g] > 0)
                    ? [<tr key={`${row.variable}-missing`}><th scope="row" className="pl-6 font-normal text-ink-faint">Missing</th>{cols.map((g) => <td key={g} className={`${num} text-ink-faint`}>{row.missing[g]}</td>)}</tr>]
                    : []),
                ]
              ),
            )}
          </tbody>
        </table>
      </section>

      <section className="panel" aria-labelledby="prim-h">
        <h2 id="prim-h" className="mb-2">Primary outcome: {primary.label} at {visitLabel(primary.visit)}</h2>
        <table>
          <thead><tr><th scope="col">Arm</th><th scope="col" className={num}>n</th><th scope="col" className={num}>Missing</th><th scope="col" className={num}>Mean (SD)</th><th scope="col" className={num}>95 % CI of the mean</th></tr></thead>
          <tbody>
            {primary.byArm.map((a) => (
              <tr key={a.arm}><td>{armLabel(a.arm)} ({a.arm})</td><td className={num}>{a.n}</td><td className={num}>{a.missing}</td><td className={num}>{a.text}</td><td className={num}>{formatCI(a.meanCI95, 1)}</td></tr>
            ))}
          </tbody>
        </table>
        <p className="mt-2" data-testid="primary-difference">
          Difference in means {primary.comparison ? `(${primary.comparison.contrast}): ${primary.comparison.text} (${primary.comparison.method}, t = ${formatNumber(primary.comparison.t, 2)}, df = ${formatNumber(primary.comparison.df, 1)})` : `${DASH} ${primary.note ?? ''}`}
        </p>
        <div className="mt-3 overflow-x-auto">
          <PrimaryChart arms={r.arms} points={primary.points} byArm={primary.byArm} />
        </div>
      </section>

      <section className="panel" aria-labelledby="sec-h">
        <h2 id="sec-h" className="mb-2">Secondary outcomes</h2>
        <h3 className="mb-1">{secondary.quickdash.label} at {visitLabel(secondary.quickdash.visit)}</h3>
        <table>
          <thead><tr><th scope="col">Arm</th><th scope="col" className={num}>n</th><th scope="col" className={num}>Missing</th><th scope="col" className={num}>Median [IQR]</th></tr></thead>
          <tbody>
            {secondary.quickdash.byArm.map((a) => <tr key={a.arm}><td>{armLabel(a.arm)} ({a.arm})</td><td className={num}>{a.n}</td><td className={num}>{a.missing}</td><td className={num}>{a.text}</td></tr>)}
          </tbody>
        </table>
        <p className="mt-2 mb-4">
          {secondary.quickdash.comparison ? `${secondary.quickdash.comparison.method} (${secondary.quickdash.comparison.contrast}): ${secondary.quickdash.comparison.text}` : `${DASH} ${secondary.quickdash.note ?? ''}`}
        </p>
        <h3 className="mb-1">{secondary.rupture.label}</h3>
        <table>
          <thead><tr><th scope="col">Arm</th><th scope="col" className={num}>Ruptures n/N (%)</th><th scope="col" className={num}>Outcome unknown</th></tr></thead>
          <tbody>
            {secondary.rupture.byArm.map((a) => <tr key={a.arm}><td>{armLabel(a.arm)} ({a.arm})</td><td className={num}>{a.text}</td><td className={num}>{a.missing}</td></tr>)}
          </tbody>
        </table>
        <p className="mt-2">
          {secondary.rupture.comparison ? `Risk difference (${secondary.rupture.comparison.contrast}): ${secondary.rupture.comparison.text}. ${secondary.rupture.comparison.method}.` : `${DASH} ${secondary.rupture.note ?? ''}`}
        </p>
      </section>

      <section className="panel" aria-labelledby="miss-h">
        <h2 id="miss-h" className="mb-2">Missing outcome data</h2>
        <table>
          <thead>
            <tr><th scope="col">Outcome</th>{r.arms.map((a) => <th key={a.code} scope="col" className={num}>{a.code}: missing / randomised (%)</th>)}{r.arms.map((a) => <th key={`e-${a.code}`} scope="col" className={num}>{a.code}: of which left follow-up early</th>)}</tr>
          </thead>
          <tbody>
            {r.missing.map((m) => (
              <tr key={m.outcome}>
                <th scope="row" className="font-normal">{m.label}</th>
                {m.byArm.map((a) => <td key={a.arm} className={num}>{a.missing} / {a.randomised} ({a.pctMissing} %)</td>)}
                {m.byArm.map((a) => <td key={`e-${a.arm}`} className={num}>{a.endedEarly}</td>)}
              </tr>
            ))}
          </tbody>
        </table>
      </section>

      <section className="panel" aria-labelledby="unb-h">
        <h2 id="unb-h" className="mb-2">Unblinded participants</h2>
        {r.unblinded.length === 0 ? (
          <p className="text-sm">No allocation has been revealed by emergency unblinding.</p>
        ) : (
          <table>
            <thead><tr><th scope="col">Study ID</th><th scope="col">Site</th><th scope="col">Arm</th><th scope="col">Revealed</th><th scope="col">Flag</th></tr></thead>
            <tbody>
              {r.unblinded.map((u) => <tr key={u.subjectCode}><td className="font-mono">{u.subjectCode}</td><td>{u.site}</td><td>{u.arm}</td><td>{u.unblindedAt ?? DASH}</td><td><span className="tag border-warn text-warn">unblinded</span></td></tr>)}
            </tbody>
          </table>
        )}
        <p className="mt-2 text-sm text-ink-soft">Outcomes of unblinded participants stay in the analysis by allocated arm; consider a sensitivity analysis without them.</p>
      </section>

      <section className="text-sm text-ink-soft" aria-labelledby="meth-h">
        <h2 id="meth-h" className="mb-1 text-base">How these figures are computed</h2>
        <ul className="list-disc pl-5">
          <li>Primary value of a participant: the mean over the repaired fingers of TAM as % of the same finger of the other hand (against the 260° norm when that finger was not measured).</li>
          <li>Difference in means with Welch&apos;s t test and interval; QuickDASH with the Wilcoxon rank-sum (Mann–Whitney) test; tendon rupture with the risk difference, Newcombe&apos;s hybrid score interval and Fisher&apos;s exact test (two-sided).</li>
          <li>Tendon rupture counts any adverse event of that kind up to the data cut; without one, a participant counts as “no rupture” only once followed up at week 12 or later.</li>
          <li>Percentages use the participants with a known value as denominator; p-values below 0.001 are shown as “&lt; 0.001”.</li>
        </ul>
      </section>
    </div>
  );
}
