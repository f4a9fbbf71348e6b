import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { ScreeningLog } from '@/components/participants/screening-log';

export const metadata: Metadata = { title: 'Screening log' };

export default async function ScreeningPage({ params }: { params: Promise<{ study: string; site: string }> }) {
  const { study: code, site: siteCode } = await params;
  const { study, site, roles } = await requireStudyAccess(code, { site: siteCode, roles: ['coordinator', 'investigator', 'monitor', 'data_manager'] });
  return (
    <div>
      <ContextBar study={study} site={site} roles={roles} />
      <h1 className="mb-3">Screening log · {site!.code}</h1>
      <ScreeningLog study={study.code} site={site!.code} canEdit={roles.includes('coordinator')} />
    </div>
  );
}
