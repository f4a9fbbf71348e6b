import 'server-only';
import { Site } from '@/models';
import { sitesFor, type Principal } from '@/lib/auth/principal';
import { todayIn } from '@/lib/dates';
import { worklist } from './index';

/** The signed-in person's worklist in a study: assessors get blinded visits due, coordinators their site's visits. */
export async function worklistFor(study: { id: number; config: Record<string, unknown> }, principal: Principal, kind: 'assessor' | 'coordinator', now = new Date()) {
  const siteIds = sitesFor(principal, study.id, [kind]);
  const sites = await Site.findAll({ where: { studyId: study.id } });
  const todayBySite = new Map(sites.map((s) => [s.id, todayIn(s.timeZone, now)]));
  const latestToday = [...todayBySite.values()].sort().at(-1) ?? now.toISOString().slice(0, 10);
  return worklist({ study, siteIds, kind, today: latestToday, todayBySite, siteCodes: new Map(sites.map((s) => [s.id, s.code])) });
}
