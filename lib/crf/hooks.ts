import 'server-only';
import type { Transaction } from 'sequelize';
import { Participant } from '@/models';
import { appendAudit } from '@/lib/audit';
import { decideEligibility } from '@/lib/screening/eligibility';
import type { CrfRecord } from '@/models';

type HookCtx = { record: CrfRecord; t: Transaction; actor: { userId: number; role: string; requestId?: string } };

/**
 * Consequences of a saved record that must commit with it. Submitting the eligibility form makes the server's
 * decision (eligible or not, with the reasons) and writes it to the screening log.
 */
export async function afterRecordSaved({ record, t, actor }: HookCtx): Promise<void> {
  if (record.formKey !== 'eligibility' || record.status !== 'submitted') return;
  const p = await Participant.findByPk(record.participantId, { transaction: t, lock: t.LOCK.UPDATE });
  if (!p || p.subjectCode) return;
  const d = decideEligibility(record.data);
  const outcome = d.eligible ? 'eligible' : 'not_eligible';
  if (p.screeningOutcome === outcome && JSON.stringify(p.screeningReasons ?? []) === JSON.stringify(d.reasons)) return;
  const old = { outcome: p.screeningOutcome, reasons: p.screeningReasons };
  await p.update({ screeningOutcome: outcome, screeningReasons: d.reasons, status: d.eligible ? 'eligible' : 'not_eligible' }, { transaction: t });
  await appendAudit(t, [{ actorUserId: actor.userId, actorRole: actor.role, studyId: p.studyId, siteId: p.siteId, entityType: 'participant', entityId: p.id, action: 'update', itemPath: '/screeningOutcome', oldValue: old, newValue: { outcome, reasons: d.reasons }, reason: 'eligibility form submitted', requestId: actor.requestId }]);
}
