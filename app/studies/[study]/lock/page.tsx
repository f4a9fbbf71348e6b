import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { LockAdmin } from '@/components/lock/lock-admin';

export const metadata: Metadata = { title: 'Database lock' };

/** The data manager's database lock page (administrators may read it). */
export default async function LockPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { principal, study, roles } = await requireStudyAccess(code, { roles: ['data_manager', 'admin'] });
  return (
    <div>
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1 className="mb-3">Database lock</h1>
      <LockAdmin study={study.code} canAct={roles.includes('data_manager')} userId={principal.id} />
    </div>
  );
}
