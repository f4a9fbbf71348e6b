import 'server-only';
import type { Transaction } from 'sequelize';
import { CrfRecord } from '@/models';
import { appendAudit } from '@/lib/audit';
import { pinnedVersion } from './definitions';

/**
 * Creates a protocol deviation record found by an automatic check (a visit out of window, an exercise the
 * programme's phase does not allow), inside the caller's transaction and audited. Deviations that reveal the
 * arm are marked so, which keeps them from blinded readers.
 */
export async function createSystemDeviation(
  t: Transaction,
  a: { studyId: number; siteId: number; participantId: number; date: string; category: 'visit_out_of_window' | 'wrong_exercise_for_phase'; text: string; revealsAllocation: boolean; reason: string },
) {
  const version = await pinnedVersion(a.studyId, 'protocol_deviation');
  const [last] = await CrfRecord.findAll({ where: { participantId: a.participantId, formKey: 'protocol_deviation' }, order: [['instance', 'DESC']], limit: 1, transaction: t });
  const data = { DVSTDAT: a.date, DVCAT: a.category, DVTERM: a.text.slice(0, 2000), reported_by: 'Excursion (automatic check)', reveals_allocation: a.revealsAllocation ? 'Y' : 'N' };
  const dev = await CrfRecord.create(
    { studyId: a.studyId, siteId: a.siteId, participantId: a.participantId, formKey: 'protocol_deviation', formVersion: version, visitKey: '', instance: (last?.instance ?? 0) + 1, status: 'submitted', data, derived: {}, review: [], lockVersion: 1, createdBy: null, updatedBy: null, submittedAt: new Date(), voidReason: null },
    { transaction: t },
  );
  await appendAudit(t, [{ actorUserId: null, actorRole: 'system', studyId: a.studyId, siteId: a.siteId, entityType: 'crf_record', entityId: dev.id, action: 'create', newValue: data, reason: a.reason, formVersion: version }]);
  return dev;
}
