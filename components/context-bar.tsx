import Link from 'next/link';
import { ROLE_LABELS, type Role } from '@/lib/roles';
import { sitesFor, type Principal } from '@/lib/auth/principal';

/**
 * The sites a study-level page covers for this person: "all sites" only when one of their memberships in the roles
 * shown is study-wide; otherwise the codes of the sites they hold those roles at.
 */
export function sitesCovered(principal: Pick<Principal, 'memberships'>, studyId: number, roles: readonly Role[]): string {
  const ids = sitesFor(principal, studyId, roles);
  if (ids === 'all') return 'all sites';
  const codes = new Set(principal.memberships.filter((m) => m.siteId !== null && ids.includes(m.siteId) && m.siteCode).map((m) => m.siteCode as string));
  return codes.size ? [...codes].sort().join(', ') : 'none';
}

/** Shows where the person is working: study, site and the role(s) they act in here. */
export function ContextBar({ study, site, roles, principal }: { study: { id: number; code: string; title: string }; site?: { code: string; name: string } | null; roles: Role[]; /** On study-level pages: whose sites to name. */ principal?: Pick<Principal, 'memberships'> }) {
  return (
    <nav aria-label="Current study" className="mb-4 flex flex-wrap items-center gap-x-4 gap-y-1 rounded-md border border-line bg-glide-tint px-3 py-2 text-sm">
      <span>
        Study <Link href={`/studies/${study.code}`} className="font-semibold">{study.code}</Link>
      </span>
      <span>Site <strong>{site ? `${site.code} · ${site.name}` : principal ? sitesCovered(principal, study.id, roles) : 'all sites'}</strong></span>
      <span>
        Role <strong>{roles.map((r) => ROLE_LABELS[r]).join(', ')}</strong>
      </span>
    </nav>
  );
}
