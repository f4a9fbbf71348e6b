import 'server-only';
import type { Role } from '@/lib/roles';
import { AppError } from '@/lib/errors';
import { studyForms } from './definitions';
import { readRoles } from './access';
import { participantAudit, participantRecords } from './records';
import { isBlinded } from './access';
import { allocationFor } from '@/lib/allocation';
import { participantUploads } from '@/lib/uploads';

type StudyLike = { id: number; code: string; title: string; config: Record<string, unknown> };

/** Keys of the study's forms that the given roles may read. */
export async function visibleFormKeys(study: StudyLike, roles: Role[]) {
  return (await studyForms(study.id)).filter((f) => roles.some((r) => readRoles(f.access, study.config).includes(r)));
}

/** The participant's casebook: the forms the reader may see and the records entered on them. */
export async function casebook(study: StudyLike, participantId: number, roles: Role[]) {
  const forms = await visibleFormKeys(study, roles);
  const blinded = isBlinded(roles, study.config);
  const records = (await participantRecords(participantId, forms.map((f) => f.key))).filter((r) => !(blinded && revealsAllocation(r)));
  const allocation = await allocationFor(study, participantId, roles);
  const uploads = roles.some((r) => r !== 'assessor') ? await participantUploads(participantId) : [];
  return { forms, records, uploads, ...(allocation ? { allocation } : {}) };
}

/** Audit rows of a participant, limited to forms the reader may see. */
export async function participantAuditFor(study: StudyLike, participantId: number, roles: Role[], q: Omit<Parameters<typeof participantAudit>[0], 'participantId' | 'formKeys' | 'hideRevealing'>) {
  const keys = (await visibleFormKeys(study, roles)).map((f) => f.key);
  if (q.formKey && !keys.includes(q.formKey)) throw new AppError('forbidden', 'Your role does not allow reading this form.');
  // Forms the reader may not see are excluded in SQL, so counts and pages give no hint of them.
  return participantAudit({ ...q, participantId, formKeys: keys, hideRevealing: isBlinded(roles, study.config) });
}

/** Protocol deviations whose description reveals the arm are unblinded-only. */
export function revealsAllocation(r: { formKey: string; data: Record<string, unknown> }): boolean {
  return r.formKey === 'protocol_deviation' && r.data.reveals_allocation === 'Y';
}
