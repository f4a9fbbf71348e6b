// Fills the demo study TEMPO-FT with about 120 invented participants over 14 months (lib/studies/simulate.ts).
// Runs only while the study has no participants, so it never adds to real entries; `--seed=<text>` picks the stream.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { Participant, Site, Study, User, sequelize } from '../models';
import { DEMO_STUDY } from '../lib/studies/demo';
import { simulateStudy } from '../lib/studies/simulate';

type DemoAccounts = { password: string; users: { email: string; role: string; site: string | null }[] };

async function main() {
  const seed = process.argv.find((a) => a.startsWith('--seed='))?.slice(7) || 'tempo-ft-demo-1';
  const accounts = JSON.parse(readFileSync(path.resolve(__dirname, 'demo-accounts.json'), 'utf8')) as DemoAccounts;
  const study = await Study.findOne({ where: { code: DEMO_STUDY.code } });
  if (!study) throw new Error(`The demo study ${DEMO_STUDY.code} is not loaded; run npm start first.`);
  const existing = await Participant.count({ where: { studyId: study.id } });
  if (existing > 0) {
    console.log(`[excursion] demo simulation: ${DEMO_STUDY.code} already has ${existing} participants; nothing added.`);
    return;
  }
  const id = async (role: string, site: string | null) => {
    const a = accounts.users.find((u) => u.role === role && u.site === site);
    const u = a && (await User.findOne({ where: { email: a.email } }));
    if (!u) throw new Error(`The demo account for ${role}${site ? ` at ${site}` : ''} is missing.`);
    return u.id;
  };
  const staff: Record<string, { coordinator: number; therapist: number; assessor: number }> = {};
  for (const s of await Site.findAll({ where: { studyId: study.id } })) {
    staff[s.code] = { coordinator: await id('coordinator', s.code), therapist: await id('therapist', s.code), assessor: await id('assessor', s.code) };
  }
  const started = Date.now();
  console.log(`[excursion] demo simulation: creating invented participants for ${DEMO_STUDY.code} (seed "${seed}")…`);
  const summary = await simulateStudy({
    studyId: study.id, seed, staff,
    investigator: await id('investigator', null), monitor: await id('monitor', null), dataManager: await id('data_manager', null),
    investigatorPassword: accounts.password,
  });
  console.log(`[excursion] demo simulation done in ${Math.round((Date.now() - started) / 1000)} s: ${JSON.stringify(summary)}`);
}

main()
  .catch((e) => {
    console.error(e);
    process.exitCode = 1;
  })
  .finally(() => sequelize.close());
