import type { Metadata } from 'next';
import Link from 'next/link';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { siteTeam } from '@/lib/sites/team';
import { ROLE_LABELS } from '@/lib/roles';

export async function generateMetadata({ params }: { params: Promise<{ study: string; site: string }> }): Promise<Metadata> {
  const { study, site } = await params;
  return { title: `Site ${site} · ${study}` };
}

export default async function SitePage({ params }: { params: Promise<{ study: string; site: string }> }) {
  const { study: code, site: siteCode } = await params;
  const { study, site, roles } = await requireStudyAccess(code, { site: siteCode });
  const team = await siteTeam(study.id, site!.id);
  return (
    <div>
      <ContextBar study={study} site={site} roles={roles} />
      <h1 className="mb-1">{site!.name}</h1>
      <p className="mb-4 text-sm text-ink-soft">
        Local time zone {site!.timeZone} · recruitment target {site!.recruitmentTarget} participants
      </p>
      {roles.some((r) => r !== 'admin' && r !== 'statistician') && (
        <p className="mb-4">
          <Link href={`/studies/${study.code}/sites/${site!.code}/participants`} className="btn no-underline">Participants at {site!.code}</Link>{' '}
          <Link href={`/studies/${study.code}/sites/${site!.code}/queries`} className="btn-quiet">Data queries</Link>
        </p>
      )}
      <section className="panel" aria-labelledby="team-h">
        <h2 id="team-h" className="mb-2">Site team</h2>
        <table>
          <thead>
            <tr>
              <th scope="col">Name</th>
              <th scope="col">Role</th>
            </tr>
          </thead>
          <tbody>
            {team.map((m) => (
              <tr key={`${m.name}-${m.role}`}>
                <td>{m.name}</td>
                <td>{ROLE_LABELS[m.role]}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>
    </div>
  );
}
