import type { Metadata } from 'next';
import Link from 'next/link';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { listSites } from '@/lib/sites';
import { sitesFor } from '@/lib/auth/principal';
import { ROLES } from '@/lib/roles';
import { isBlinded } from '@/lib/crf/access';
import { REPORT_ROLES, SAMPLE_SIZE_ROLES } from '@/lib/report';

/** The title names the study from the URL only (no look-up: a non-member gets the 404 page anyway). */
export async function generateMetadata({ params }: { params: Promise<{ study: string }> }): Promise<Metadata> {
  return { title: `Study ${(await params).study}` };
}

export default async function StudyPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { principal, study, roles } = await requireStudyAccess(code);
  const { rows } = await listSites(study.id, { page: 1, pageSize: 200 });
  const visible = sitesFor(principal, study.id, ROLES);
  const sites = visible === 'all' ? rows : rows.filter((s) => visible.includes(s.id));
  const target = sites.reduce((a, s) => a + s.recruitmentTarget, 0);
  // The trial report is by arm: offered to statisticians and data managers only when unblinded in this study.
  const reportRoles = roles.filter((r) => REPORT_ROLES.includes(r));
  return (
    <div>
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1 className="mb-3">{study.title}</h1>
      {(roles.includes('assessor') || roles.includes('coordinator')) && (
        <p className="mb-3"><Link href={`/studies/${study.code}/worklist`} className="btn no-underline">Visits due</Link></p>
      )}
      {roles.some((r) => r === 'investigator' || r === 'data_manager' || r === 'monitor') && (
        <p className="mb-3"><Link href={`/studies/${study.code}/dashboard`} className="btn no-underline">Study dashboard</Link></p>
      )}
      {roles.includes('data_manager') && (
        <p className="mb-3 text-sm"><Link href={`/studies/${study.code}/randomisation`}>Randomisation and unblinding register</Link></p>
      )}
      {(reportRoles.length > 0 || roles.some((r) => SAMPLE_SIZE_ROLES.includes(r))) && (
        <p className="mb-3 flex gap-3 text-sm">
          {reportRoles.length > 0 && !isBlinded(reportRoles, study.config) && <Link href={`/studies/${study.code}/report`}>Trial report</Link>}
          {roles.some((r) => SAMPLE_SIZE_ROLES.includes(r)) && <Link href={`/studies/${study.code}/sample-size`}>Sample-size calculator</Link>}
        </p>
      )}
      {(roles.includes('data_manager') || roles.includes('admin')) && (
        <p className="mb-3 text-sm"><Link href={`/studies/${study.code}/lock`}>Database lock</Link></p>
      )}
      {roles.some((r) => r === 'statistician' || r === 'data_manager') && (
        <p className="mb-3 text-sm"><Link href={`/studies/${study.code}/snapshots`}>Locked datasets and exports</Link></p>
      )}
      {roles.includes('admin') && (
        <p className="mb-3 flex gap-3 text-sm">
          <Link href={`/studies/${study.code}/admin/users`}>Manage users</Link>
          <Link href={`/studies/${study.code}/admin/sites`}>Manage sites</Link>
        </p>
      )}
      <section className="panel" aria-labelledby="sites-h">
        <h2 id="sites-h" className="mb-2">Sites</h2>
        <table>
          <thead>
            <tr>
              <th scope="col">Code</th>
              <th scope="col">Name</th>
              <th scope="col">Time zone</th>
              <th scope="col" className="text-right">Recruitment target</th>
            </tr>
          </thead>
          <tbody>
            {sites.map((s) => (
              <tr key={s.code}>
                <td className="font-mono">
                  <Link href={`/studies/${study.code}/sites/${s.code}`}>{s.code}</Link>
                </td>
                <td>{s.name}{!s.active && <span className="tag ml-2">inactive</span>}</td>
                <td>{s.timeZone}</td>
                <td className="text-right tabular-nums">{s.recruitmentTarget}</td>
              </tr>
            ))}
          </tbody>
          <tfoot>
            <tr>
              <td colSpan={3} className="font-semibold">Total</td>
              <td className="text-right font-semibold tabular-nums">{target}</td>
            </tr>
          </tfoot>
        </table>
      </section>
    </div>
  );
}
