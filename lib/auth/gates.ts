import 'server-only';
import { cookies } from 'next/headers';
import { redirect, notFound } from 'next/navigation';
import { cache } from 'react';
import { loadPrincipal, rolesIn, type Principal } from './principal';
import { readSessionToken, sessionCookieName } from './session';
import { Site, Study } from '@/models';
import type { Role } from '@/lib/roles';

/** The signed-in principal for this page render, or null (memoised per request). */
export const currentPrincipal = cache(async (): Promise<Principal | null> => {
  const jar = await cookies();
  const id = await readSessionToken(jar.get(sessionCookieName())?.value);
  return id ? loadPrincipal(id) : null;
});

/** For pages: the signed-in principal, or a redirect to the sign-in page. */
export async function requireUser(): Promise<Principal> {
  const p = await currentPrincipal();
  if (!p) redirect('/signin');
  return p;
}

/**
 * For pages under a study (and optionally a site): the principal, the study, the site and their roles there.
 * Not a member → 404 (the page does not reveal that the study exists); a role outside `roles` → 404 too.
 */
export async function requireStudyAccess(studyCode: string, opts: { site?: string; roles?: readonly Role[] } = {}) {
  const principal = await requireUser();
  const study = await Study.findOne({ where: { code: studyCode } });
  if (!study) notFound();
  let site: Site | null = null;
  if (opts.site !== undefined) {
    site = await Site.findOne({ where: { studyId: study.id, code: opts.site } });
    if (!site) notFound();
  }
  let roles = rolesIn(principal, study.id, site?.id);
  if (opts.roles) roles = roles.filter((r) => opts.roles!.includes(r));
  if (roles.length === 0) notFound();
  return { principal, study, site, roles };
}
