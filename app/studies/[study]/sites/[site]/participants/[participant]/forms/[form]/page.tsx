import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { requireStudyAccess } from '@/lib/auth/gates';
import { ContextBar } from '@/components/context-bar';
import { CrfForm } from '@/components/crf/crf-form';
import { visibleFormKeys } from '@/lib/crf/casebook';

export const metadata: Metadata = { title: 'Form' };
const READERS = ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'] as const;

export default async function FormPage({ params, searchParams }: { params: Promise<{ study: string; site: string; participant: string; form: string }>; searchParams: Promise<{ visit?: string; instance?: string }> }) {
  const { study: code, site: siteCode, participant, form } = await params;
  const sp = await searchParams;
  const { study, site, roles } = await requireStudyAccess(code, { site: siteCode, roles: READERS });
  const f = (await visibleFormKeys(study, roles)).find((x) => x.key === form);
  if (!f || !/^\d+$/.test(participant)) notFound();
  const q = new URLSearchParams();
  if (sp.visit) q.set('visit', sp.visit);
  if (sp.instance) q.set('instance', sp.instance);
  const api = `/api/studies/${study.code}/sites/${site!.code}/participants/${participant}`;
  return (
    <div>
      <ContextBar study={study} site={site} roles={roles} />
      <p className="mb-1 text-sm"><Link href={`/studies/${study.code}/sites/${site!.code}/participants/${participant}`}>← Casebook</Link></p>
      <h1 className="mb-3">{f.title}</h1>
      <CrfForm url={`${api}/forms/${f.key}${q.size ? `?${q}` : ''}`} auditUrl={`${api}/audit`}
        uploadUrl={`${api}/uploads`}
        timeZone={site!.timeZone}
        queriesUrl={`/api/studies/${study.code}/sites/${site!.code}/queries`}
        verifyUrl={`${api}/verify`}
        canOpenQueries={roles.includes('monitor') || roles.includes('data_manager')}
        canAnswerQueries={roles.some((r) => ['coordinator', 'therapist', 'assessor', 'investigator'].includes(r))}
      />
    </div>
  );
}
