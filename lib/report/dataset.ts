import 'server-only';
import { Op } from 'sequelize';
import { Allocation, CrfRecord, Participant, Site, Study, UnblindingEvent } from '@/models';
import { AppError } from '@/lib/errors';
import type { ReportArm, ReportDataset, ReportParticipant } from './tables';

/** The forms the report tables read. */
const REPORT_FORMS = ['baseline', 'operation', 'follow_up', 'adverse_event', 'end_of_participation'];

/**
 * The dataset a trial report is computed from.
 *
 * A trial report is meant to be computed from the **locked snapshot** of the study (the frozen dataset handed to
 * the statistician), never from data that can still change. Until the snapshot reader exists, this reads the live
 * database as a stand-in and says so in `source` (kind 'live'), and the report page marks its tables provisional.
 * When the snapshot reader lands, switch the one line below to it; nothing else needs to change, because both
 * produce the same plain `ReportDataset`.
 */
export async function loadReportDataset(studyId: number): Promise<ReportDataset> {
  return loadLiveDataset(studyId);
}

/**
 * Stand-in loader: the randomised participants of a study from the live tables, each with their arm, whether the
 * allocation was revealed (emergency unblinding), and their submitted CRF records (entered items with the derived
 * items merged in). Drafts and voided records are left out. Only for unblinded readers: it carries arms.
 */
export async function loadLiveDataset(studyId: number, now = new Date()): Promise<ReportDataset> {
  const study = await Study.findByPk(studyId);
  if (!study) throw new AppError('not_found', 'The study was not found.');
  const arms = ((study.config.arms ?? []) as { code: string; label: string }[]).map((a): ReportArm => ({ code: a.code, label: a.label }));
  const allocations = await Allocation.findAll({ where: { studyId }, order: [['id', 'ASC']] });
  const ids = allocations.map((a) => a.participantId);
  const none = [0];
  const [participants, sites, records, unblindings] = await Promise.all([
    Participant.findAll({ where: { studyId, id: { [Op.in]: ids.length ? ids : none } } }),
    Site.findAll({ where: { studyId } }),
    CrfRecord.findAll({
      where: { studyId, participantId: { [Op.in]: ids.length ? ids : none }, status: 'submitted', formKey: { [Op.in]: REPORT_FORMS } },
      attributes: ['participantId', 'formKey', 'visitKey', 'instance', 'data', 'derived'],
      order: [['participantId', 'ASC'], ['formKey', 'ASC'], ['visitKey', 'ASC'], ['instance', 'ASC']],
    }),
    UnblindingEvent.findAll({ where: { studyId }, attributes: ['participantId', 'at'], order: [['at', 'ASC']] }),
  ]);
  const siteCode = new Map(sites.map((s) => [s.id, s.code]));
  const byId = new Map(participants.map((p) => [p.id, p]));
  const firstReveal = new Map<number, Date>();
  for (const u of unblindings) if (!firstReveal.has(u.participantId)) firstReveal.set(u.participantId, u.at);
  const recordsBy = new Map<number, ReportParticipant['records']>();
  for (const r of records) {
    const list = recordsBy.get(r.participantId) ?? [];
    list.push({ formKey: r.formKey, visitKey: r.visitKey, data: { ...(r.data ?? {}), ...(r.derived ?? {}) } });
    recordsBy.set(r.participantId, list);
  }
  const out: ReportParticipant[] = allocations.map((a) => {
    const p = byId.get(a.participantId);
    const revealed = firstReveal.get(a.participantId) ?? p?.unblindedAt ?? null;
    return {
      subjectCode: p?.subjectCode ?? `participant ${a.participantId}`,
      site: siteCode.get(a.siteId) ?? '',
      arm: a.arm,
      unblinded: revealed !== null,
      unblindedAt: revealed ? revealed.toISOString() : null,
      records: recordsBy.get(a.participantId) ?? [],
    };
  });
  return {
    study: { code: study.code, title: study.title },
    arms,
    source: { kind: 'live', asOf: now.toISOString(), label: 'Live database (not locked): provisional figures' },
    participants: out,
  };
}
