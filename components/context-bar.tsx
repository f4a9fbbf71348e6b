import Link from 'next/link';
import { ROLE_LABELS, type Role } from '@/lib/roles';

/** Shows where the person is working: study, site and the role(s) they act in here. */
export function ContextBar({ study, site, roles }: { study: { code: string; title: string }; site?: { code: string; name: string } | null; roles: Role[] }) {
  return (
    <nav aria-label="Current study" className="mb-4 flex flex-wrap items-center gap-x-4 gap-y-1 rounded-md border border-line bg-glide-tint px-3 py-2 text-sm">
      <span>
        Study <Link href={`/studies/${study.code}`} className="font-semibold">{study.code}</Link>
      </span>
      <span>Site <strong>{site ? `${site.code} · ${site.name}` : 'all sites'}</strong></span>
      <span>
        Role <strong>{roles.map((r) => ROLE_LABELS[r]).join(', ')}</strong>
      </span>
    </nav>
  );
}
