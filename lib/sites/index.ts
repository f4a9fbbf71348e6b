import 'server-only';
import { Site, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import type { Actor } from '@/lib/users/invitations';

/** The public shape of a site. */
export type SiteView = { id: number; code: string; name: string; timeZone: string; recruitmentTarget: number; active: boolean };
export const presentSite = (s: Site): SiteView => ({ id: s.id, code: s.code, name: s.name, timeZone: s.timeZone, recruitmentTarget: s.recruitmentTarget, active: s.active });

/** True when the runtime knows the IANA time zone name. */
export function isTimeZone(tz: string): boolean {
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: tz });
    return true;
  } catch {
    return false;
  }
}

const SORTS = { code: 'code', name: 'name', target: 'recruitmentTarget' } as const;

/** Sites of a study, paged on the server. */
export async function listSites(studyId: number, q: { page: number; pageSize: number; sort?: string }): Promise<{ rows: SiteView[]; total: number }> {
  const col = SORTS[(q.sort ?? 'code') as keyof typeof SORTS] ?? 'code';
  const { rows, count } = await Site.findAndCountAll({ where: { studyId }, order: [[col, 'ASC'], ['id', 'ASC']], offset: (q.page - 1) * q.pageSize, limit: q.pageSize });
  return { rows: rows.map(presentSite), total: count };
}

export type SiteInput = { code: string; name: string; timeZone: string; recruitmentTarget: number; active?: boolean };

/** Creates a site; the code is unique in the study and never changes afterwards. */
export async function createSite(a: { studyId: number; input: SiteInput; actor: Actor }): Promise<SiteView> {
  if (!isTimeZone(a.input.timeZone)) throw new AppError('validation_failed', 'Unknown time zone.', { fields: { timeZone: 'Use an IANA name such as Europe/London.' } });
  return sequelize.transaction(async (t) => {
    if (await Site.findOne({ where: { studyId: a.studyId, code: a.input.code }, transaction: t })) {
      throw new AppError('conflict', `A site with the code ${a.input.code} already exists in this study.`, { fields: { code: 'Already in use.' } });
    }
    const s = await Site.create({ studyId: a.studyId, code: a.input.code, name: a.input.name, timeZone: a.input.timeZone, recruitmentTarget: a.input.recruitmentTarget, active: a.input.active ?? true }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId: s.id, entityType: 'site', entityId: s.id, action: 'create', newValue: presentSite(s), requestId: a.actor.requestId }]);
    return presentSite(s);
  });
}

/** Edits a site's name, time zone, target or active flag; one audit row per changed field. */
export async function updateSite(a: { studyId: number; code: string; patch: Partial<Omit<SiteInput, 'code'>>; reason?: string; actor: Actor }): Promise<SiteView> {
  if (a.patch.timeZone !== undefined && !isTimeZone(a.patch.timeZone)) throw new AppError('validation_failed', 'Unknown time zone.', { fields: { timeZone: 'Use an IANA name such as Europe/London.' } });
  return sequelize.transaction(async (t) => {
    const s = await Site.findOne({ where: { studyId: a.studyId, code: a.code }, transaction: t, lock: t.LOCK.UPDATE });
    if (!s) throw new AppError('not_found', 'The site was not found in this study.');
    const before = presentSite(s);
    const changes = (Object.keys(a.patch) as (keyof typeof a.patch)[]).filter((k) => a.patch[k] !== undefined && a.patch[k] !== before[k]);
    if (changes.length === 0) return before;
    await s.update(a.patch, { transaction: t });
    await appendAudit(
      t,
      changes.map((k) => ({ actorUserId: a.actor.userId, actorRole: a.actor.role, studyId: a.studyId, siteId: s.id, entityType: 'site', entityId: s.id, action: 'update', itemPath: `/${k}`, oldValue: before[k], newValue: a.patch[k], reason: a.reason ?? null, requestId: a.actor.requestId })),
    );
    return presentSite(s);
  });
}
