// The context bar's site wording on study-level pages: "all sites" only for a study-wide membership in the roles shown.
import { describe, it, expect } from 'vitest';
import { sitesCovered } from '@/components/context-bar';
import type { MembershipView } from '@/lib/auth/principal';

const m = (role: MembershipView['role'], studyId: number, siteCode: string | null): MembershipView => ({
  id: 1, role, studyId, studyCode: `S${studyId}`, studyTitle: 't', siteId: siteCode ? siteCode.charCodeAt(0) : null, siteCode, siteName: siteCode,
});

describe('sitesCovered', () => {
  it('names the sites of site-limited memberships, sorted', () => {
    expect(sitesCovered({ memberships: [m('assessor', 1, 'MLB'), m('assessor', 1, 'HHC')] }, 1, ['assessor'])).toBe('HHC, MLB');
  });
  it('says all sites when one membership in the roles shown is study-wide', () => {
    expect(sitesCovered({ memberships: [m('monitor', 1, 'HHC'), m('monitor', 1, null)] }, 1, ['monitor'])).toBe('all sites');
  });
  it('ignores other studies and roles not shown', () => {
    expect(sitesCovered({ memberships: [m('assessor', 2, null), m('admin', 1, null), m('assessor', 1, 'KVH')] }, 1, ['assessor'])).toBe('KVH');
  });
});
