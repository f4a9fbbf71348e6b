import 'server-only';
import { Op } from 'sequelize';
import { Participant, Site } from '@/models';
import { AppError } from '@/lib/errors';

/** A participant as lists show them (no allocation here: that is added only for unblinded readers). */
export type ParticipantView = { id: number; siteCode: string; screeningNumber: string; subjectCode: string | null; status: string; unblinded: boolean; createdAt: string };

const present = (p: Participant, siteCode: string): ParticipantView => ({
  id: p.id, siteCode, screeningNumber: p.screeningNumber, subjectCode: p.subjectCode, status: p.status, unblinded: !!p.unblindedAt, createdAt: p.createdAt.toISOString(),
});

/** A participant of the given site, or 404 (also when it belongs to another site: no cross-site hints). */
export async function getParticipant(studyId: number, siteId: number, id: number) {
  const p = await Participant.findOne({ where: { id, studyId, siteId }, include: [{ model: Site, as: 'site', attributes: ['code'] }] });
  if (!p) throw new AppError('not_found', 'The participant was not found at this site.');
  return present(p, (p as unknown as { site: Site }).site.code);
}

/** Participants of one site, paged on the server, newest first. */
export async function listParticipants(studyId: number, siteId: number, q: { page: number; pageSize: number; search?: string }) {
  const where: Record<string | symbol, unknown> = { studyId, siteId };
  if (q.search) where[Op.or as unknown as string] = [{ screeningNumber: { [Op.like]: `%${q.search}%` } }, { subjectCode: { [Op.like]: `%${q.search}%` } }];
  const { rows, count } = await Participant.findAndCountAll({ where, include: [{ model: Site, as: 'site', attributes: ['code'] }], order: [['id', 'DESC']], offset: (q.page - 1) * q.pageSize, limit: q.pageSize });
  return { total: count, rows: rows.map((p) => present(p, (p as unknown as { site: Site }).site.code)) };
}
