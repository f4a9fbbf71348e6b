import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { UsersAdmin } from '@/components/admin/users-admin';
import { listSites } from '@/lib/sites';

export const metadata: Metadata = { title: 'Users' };

export default async function UsersAdminPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { principal, study, roles } = await requireStudyAccess(code, { roles: ['admin'] });
  const { rows } = await listSites(study.id, { page: 1, pageSize: 200 });
  return (
    <div>
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1 className="mb-3">Users</h1>
      <UsersAdmin study={study.code} sites={rows.map((s) => s.code)} />
    </div>
  );
}
