// Factories for test data, written through the models with the application's database user.
import { randomBytes } from 'node:crypto';
import { Membership, Site, Study, User } from '@/models';
import { hashPassword } from '@/lib/auth/password';
import type { Role } from '@/lib/roles';

export const TEST_PASSWORD = 'correct-horse-battery-staple';
let hashed: Promise<string> | null = null;

export const uniq = (prefix = 't') => `${prefix}-${randomBytes(4).toString('hex')}`;

export async function demoStudy() {
  const s = await Study.findOne({ where: { code: 'TEMPO-FT' } });
  if (!s) throw new Error('the demo study is not loaded');
  return s;
}

export async function siteOf(studyId: number, code: string) {
  const s = await Site.findOne({ where: { studyId, code } });
  if (!s) throw new Error(`no site ${code}`);
  return s;
}

/** An active user with the test password and the given memberships (site code null = all sites). */
export async function makeUser(memberships: { role: Role; site: string | null; studyId?: number }[] = [], opts: { status?: 'active' | 'invited' | 'deactivated' } = {}) {
  hashed ??= hashPassword(TEST_PASSWORD);
  const email = `${uniq('user')}@test.example`;
  const user = await User.create({ email, name: `Test ${email.slice(5, 13)}`, passwordHash: await hashed, status: opts.status ?? 'active', lockedUntil: null, lastLoginAt: null });
  const study = await demoStudy();
  const ms = [];
  for (const m of memberships) {
    const studyId = m.studyId ?? study.id;
    const siteId = m.site ? (await siteOf(studyId, m.site)).id : null;
    ms.push(await Membership.create({ userId: user.id, studyId, siteId, role: m.role, revokedAt: null }));
  }
  return { user, email, memberships: ms };
}
