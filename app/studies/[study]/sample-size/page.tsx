import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { SAMPLE_SIZE_ROLES } from '@/lib/report';
import { PLANNING_CAUTION } from '@/lib/report/sample-size';
import { ContextBar } from '@/components/context-bar';
import { SampleSizeForm } from '@/components/report/sample-size-form';

export const metadata: Metadata = { title: 'Sample-size calculator' };

export default async function SampleSizePage({ params }: { params: Promise<{ study: string }> }) {
  const { study: code } = await params;
  const { principal, study, roles } = await requireStudyAccess(code, { roles: SAMPLE_SIZE_ROLES });
  return (
    <div className="flex flex-col gap-4">
      <ContextBar study={study} roles={roles} principal={principal} />
      <h1>Sample-size calculator</h1>
      <p className="text-sm">
        Number of participants per arm for a two-arm trial with equal arms, for a difference in means (two-sample t test) or in proportions
        (normal approximation). It reads no study data. {PLANNING_CAUTION}
      </p>
      <SampleSizeForm url={`/api/studies/${study.code}/sample-size`} />
    </div>
  );
}
