// Loads the invented demo study TEMPO-FT, its four sites and one account per role. Idempotent:
// anything already there is left as it is, so running it again never changes or duplicates data.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { Op } from 'sequelize';
import { Membership, Site, Study, User, sequelize } from '../models';
import { appendAudit } from '../lib/audit';
import { hashPassword } from '../lib/auth/password';
import { DEMO_STUDY } from '../lib/studies/demo';
import type { Role } from '../lib/roles';

type DemoAccounts = { password: string; users: { email: string; name: string; role: Role; site: string | null }[] };

async function main() {
  const accounts = JSON.parse(readFileSync(path.resolve(__dirname, 'demo-accounts.json'), 'utf8')) as DemoAccounts;
  const hash = await hashPassword(accounts.password);
  let created = 0;
  await sequelize.transaction(async (t) => {
    const audit: Parameters<typeof appendAudit>[1] = [];
    let study = await Study.findOne({ where: { code: DEMO_STUDY.code }, transaction: t });
    if (!study) {
      study = await Study.create({ code: DEMO_STUDY.code, title: DEMO_STUDY.title, status: DEMO_STUDY.status, config: DEMO_STUDY.config }, { transaction: t });
      audit.push({ actorUserId: null, actorRole: 'system', studyId: study.id, entityType: 'study', entityId: study.id, action: 'create', newValue: { code: study.code, title: study.title }, reason: 'demo data' });
      created++;
    }
    const sites = new Map<string, number>();
    for (const s of DEMO_STUDY.sites) {
      let site = await Site.findOne({ where: { studyId: study.id, code: s.code }, transaction: t });
      if (!site) {
        site = await Site.create({ studyId: study.id, ...s }, { transaction: t });
        audit.push({ actorUserId: null, actorRole: 'system', studyId: study.id, siteId: site.id, entityType: 'site', entityId: site.id, action: 'create', newValue: s, reason: 'demo data' });
        created++;
      }
      sites.set(s.code, site.id);
    }
    for (const a of accounts.users) {
      let user = await User.findOne({ where: { email: a.email }, transaction: t });
      if (!user) {
        user = await User.create({ email: a.email, name: a.name, passwordHash: hash, status: 'active', lockedUntil: null, lastLoginAt: null }, { transaction: t });
        audit.push({ actorUserId: null, actorRole: 'system', entityType: 'user', entityId: user.id, action: 'create', newValue: { email: a.email, name: a.name, status: 'active' }, reason: 'demo data' });
        created++;
      }
      const siteId = a.site ? sites.get(a.site)! : null;
      const has = await Membership.findOne({ where: { userId: user.id, studyId: study.id, siteId, role: a.role, revokedAt: { [Op.is]: null } }, transaction: t });
      if (!has) {
        const m = await Membership.create({ userId: user.id, studyId: study.id, siteId, role: a.role, revokedAt: null }, { transaction: t });
        audit.push({ actorUserId: null, actorRole: 'system', studyId: study.id, siteId, entityType: 'membership', entityId: m.id, action: 'create', newValue: { userId: user.id, role: a.role, siteId }, reason: 'demo data' });
        created++;
      }
    }
    await appendAudit(t, audit);
  });
  console.log(`[excursion] demo study ${DEMO_STUDY.code}: ${created ? `${created} records created` : 'already loaded'}`);
  await sequelize.close();
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
