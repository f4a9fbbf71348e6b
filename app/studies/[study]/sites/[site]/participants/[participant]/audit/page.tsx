import type { Metadata } from 'next';
import Link from 'next/link';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { AuditTable } from '@/components/crf/audit-table';
import { visibleFormKeys } from '@/lib/crf/casebook';

export const metadata: Metadata = { title: 'Changes' };
const READERS = ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] as const;

export default async function AuditPage({ params }: { params: Promise<{ study: string; site: string; participant: string }> }) {
  const { study: code, site: siteCode, participant } = await params;
  const { study, site, roles } = await requireStudyAccess(code, { site: siteCode, roles: READERS });
  const forms = await visibleFormKeys(study, roles);
  return (
    <div>
      <ContextBar study={study} site={site} roles={roles} />
      <p className="mb-1 text-sm"><Link href={`/studies/${study.code}/sites/${site!.code}/participants/${participant}`}>← Casebook</Link></p>
      <h1 className="mb-3">All changes</h1>
      <AuditTable url={`/api/studies/${study.code}/sites/${site!.code}/participants/${participant}/audit`} forms={forms.map((f) => ({ key: f.key, title: f.title }))} timeZone={site!.timeZone} />
    </div>
  );
}
