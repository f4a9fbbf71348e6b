import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { RandomisationAdmin } from '@/components/participants/randomisation-admin';

export const metadata: Metadata = { title: 'Randomisation' };

export default async function RandomisationPage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { principal, study, roles } = await requireStudyAccess(code, { roles: ['data_manager'] });
  return (
    <div>
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1 className="mb-3">Randomisation</h1>
      <RandomisationAdmin study={study.code} />
    </div>
  );
}
