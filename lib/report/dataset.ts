import 'server-only';
import { Op } from 'sequelize';
import { Allocation, CrfRecord, Participant, Site, Snapshot, Study, UnblindingEvent } from '@/models';
import { AppError } from '@/lib/errors';
import { readAll, readManifest } from '@/lib/snapshot/read';
import type { ReportArm, ReportDataset, ReportParticipant } from './tables';

/** The forms the report tables read. */
const REPORT_FORMS = ['baseline', 'operation', 'follow_up', 'adverse_event', 'end_of_participation'];

/**
 * The dataset a trial report is computed from: the study's newest **locked snapshot** (the frozen dataset handed to
 * the statistician) when there is one; before the hard lock, the live database, marked provisional in `source`
 * (kind 'live') so the page says the figures can still change. Both produce the same plain `ReportDataset`.
 */
export async function loadReportDataset(studyId: number): Promise<ReportDataset> {
  const snap = await Snapshot.findOne({ where: { studyId }, order: [['id', 'DESC']] });
  return snap ? loadSnapshotDataset(snap) : loadLiveDataset(studyId);
}

type SnapStudy = { kind: string; code?: string; title?: string; config?: Record<string, unknown>; id?: number };
type SnapRecord = { participantId: number; formKey: string; visitKey: string; instance: number; status: string; data: Record<string, unknown> | null; derived: Record<string, unknown> | null };

/**
 * The report's dataset from a snapshot's files in object storage (study, participants, allocations, unblinding
 * events and the records of the report's forms); submitted records only, as from the live tables.
 */
export async function loadSnapshotDataset(snap: Snapshot): Promise<ReportDataset> {
  const manifest = await readManifest(snap.storagePrefix);
  const has = new Set(manifest.files.map((f) => f.name));
  const studyRows = await readAll<SnapStudy>(snap.storagePrefix, 'study.jsonl');
  const study = studyRows.find((r) => r.kind === 'study');
  if (!study) throw new AppError('internal', `Snapshot ${snap.id} has no study row.`);
  const siteCode = new Map(studyRows.filter((r) => r.kind === 'site').map((r) => [r.id!, String((r as { code?: string }).code)]));
  const arms = ((study.config?.arms ?? []) as { code: string; label: string }[]).map((a): ReportArm => ({ code: a.code, label: a.label }));
  const allocations = await readAll<{ participantId: number; siteId: number; arm: string }>(snap.storagePrefix, 'allocations.jsonl');
  const participants = new Map((await readAll<{ id: number; subjectCode: string | null; unblindedAt: string | null }>(snap.storagePrefix, 'participants.jsonl')).map((p) => [p.id, p]));
  const firstReveal = new Map<number, string>();
  for (const u of (await readAll<{ participantId: number; at: string }>(snap.storagePrefix, 'unblinding_events.jsonl')).sort((a, b) => a.at.localeCompare(b.at))) {
    if (!firstReveal.has(u.participantId)) firstReveal.set(u.participantId, u.at);
  }
  const rows: SnapRecord[] = [];
  for (const form of REPORT_FORMS) {
    if (has.has(`records.${form}.jsonl`)) rows.push(...(await readAll<SnapRecord>(snap.storagePrefix, `records.${form}.jsonl`)).filter((r) => r.status === 'submitted'));
  }
  // The same order as the live loader, so a report from a snapshot equals one from the data it froze.
  const cmp = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);
  rows.sort((a, b) => a.participantId - b.participantId || cmp(a.formKey, b.formKey) || cmp(a.visitKey, b.visitKey) || a.instance - b.instance);
  const out = assemble(allocations, rows, siteCode, (pid) => firstReveal.get(pid) ?? participants.get(pid)?.unblindedAt ?? null, (pid) => participants.get(pid)?.subjectCode ?? null);
  return {
    study: { code: String(study.code), title: String(study.title) },
    arms,
    source: { kind: 'snapshot', asOf: snap.createdAt.toISOString(), label: `Locked snapshot ${snap.id} of ${snap.createdAt.toISOString().slice(0, 16).replace('T', ' ')} UTC (hash ${snap.manifestHash.slice(0, 12)}…)` },
    participants: out,
  };
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
  const out = assemble(allocations, records, siteCode, (pid) => (firstReveal.get(pid) ?? byId.get(pid)?.unblindedAt ?? null)?.toISOString() ?? null, (pid) => byId.get(pid)?.subjectCode ?? null);
  return {
    study: { code: study.code, title: study.title },
    arms,
    source: { kind: 'live', asOf: now.toISOString(), label: 'Live database (not locked): provisional figures' },
    participants: out,
  };
}

/**
 * The report's participants, one per allocation in the given order, each with its submitted records (entered items
 * with the derived items merged in) in the order given; shared by the snapshot and the live loader.
 */
function assemble(
  allocations: { participantId: number; siteId: number; arm: string }[],
  records: { participantId: number; formKey: string; visitKey: string; data: Record<string, unknown> | null; derived: Record<string, unknown> | null }[],
  siteCode: Map<number, string>,
  revealedAt: (participantId: number) => string | null,
  subjectCode: (participantId: number) => string | null,
): ReportParticipant[] {
  const recordsBy = new Map<number, ReportParticipant['records']>();
  for (const r of records) {
    const list = recordsBy.get(r.participantId) ?? [];
    list.push({ formKey: r.formKey, visitKey: r.visitKey, data: { ...(r.data ?? {}), ...(r.derived ?? {}) } });
    recordsBy.set(r.participantId, list);
  }
  return allocations.map((a) => {
    const revealed = revealedAt(a.participantId);
    return {
      subjectCode: subjectCode(a.participantId) ?? `participant ${a.participantId}`,
      site: siteCode.get(a.siteId) ?? '',
      arm: a.arm,
      unblinded: revealed !== null,
      unblindedAt: revealed,
      records: recordsBy.get(a.participantId) ?? [],
    };
  });
}
