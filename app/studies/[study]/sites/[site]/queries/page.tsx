import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { QueriesTable } from '@/components/monitoring/queries-table';

export const metadata: Metadata = { title: 'Data queries' };

export default async function QueriesPage({ params }: { params: Promise<{ study: string; site: string }> }) {
  const { study: code, site: siteCode } = await params;
  const { study, site, roles } = await requireStudyAccess(code, { site: siteCode, roles: ['monitor', 'data_manager', 'coordinator', 'investigator', 'therapist', 'assessor'] });
  return (
    <div>
      <ContextBar study={study} site={site} roles={roles} />
      <h1 className="mb-3">Data queries · {site!.code}</h1>
      <QueriesTable study={study.code} site={site!.code} />
    </div>
  );
}
