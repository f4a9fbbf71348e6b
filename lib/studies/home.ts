import type { MembershipView, Principal } from '@/lib/auth/principal';
import { ROLE_LABELS, type Role } from '@/lib/roles';

/** One study on a person's home page with the roles and sites they hold there. */
export type HomeStudy = { code: string; title: string; entries: { role: Role; roleLabel: string; siteCode: string | null; siteName: string | null }[] };

/** Groups a principal's memberships by study, for the home page. */
export function homeStudies(p: Principal): HomeStudy[] {
  const byStudy = new Map<string, HomeStudy>();
  for (const m of p.memberships as MembershipView[]) {
    const s = byStudy.get(m.studyCode) ?? { code: m.studyCode, title: m.studyTitle, entries: [] };
    s.entries.push({ role: m.role, roleLabel: ROLE_LABELS[m.role], siteCode: m.siteCode, siteName: m.siteName });
    byStudy.set(m.studyCode, s);
  }
  return [...byStudy.values()];
}
