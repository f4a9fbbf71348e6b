import Link from 'next/link';
import type { Metadata } from 'next';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { ParticipantsTable } from '@/components/participants/participants-table';

export const metadata: Metadata = { title: 'Participants' };
const READERS = ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] as const;

export default async function ParticipantsPage({ params }: { params: Promise<{ study: string; site: string }> }) {
  const { study: code, site: siteCode } = await params;
  const { study, site, roles } = await requireStudyAccess(code, { site: siteCode, roles: READERS });
  return (
    <div>
      <ContextBar study={study} site={site} roles={roles} />
      <h1 className="mb-3">Participants at {site!.code}</h1>
      <p className="mb-3 text-sm"><Link href={`/studies/${study.code}/sites/${site!.code}/screening`}>Screening log</Link></p>
      <ParticipantsTable study={study.code} site={site!.code} />
    </div>
  );
}
