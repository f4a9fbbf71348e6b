import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { SitesAdmin } from '@/components/admin/sites-admin';

export const metadata: Metadata = { title: 'Sites' };

export default async function SitesAdminPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { principal, study, roles } = await requireStudyAccess(code, { roles: ['admin'] });
  return (
    <div>
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1 className="mb-3">Sites</h1>
      <SitesAdmin study={study.code} />
    </div>
  );
}
