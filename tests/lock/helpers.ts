// A study of the lock tests' own (so locking it never touches TEMPO-FT, which later files use), with three sites,
// the forms pinned, randomisation active, and one user per role needed.
import { Participant, Site, Study } from '@/models';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { pinForm } from '@/lib/crf/definitions';
import { randomiseParticipant } from '@/lib/allocation';
import { makeUser, TEST_PASSWORD, uniq } from '../support/factories';
import { Client } from '../support/http';
import type { Role } from '@/lib/roles';
import { ensureActivated, readyParticipant } from '../support/ready';

export const FORMS = ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session'];

export async function lockStudy(prefix: string) {
  const code = uniq(prefix).toUpperCase();
  // A study-ID prefix of its own, so this study's IDs are told apart from other tests' AAA-001 in the logs.
  const config = { ...DEMO_STUDY.config, randomisation: { ...DEMO_STUDY.config.randomisation, subjectPrefix: code } };
  const study = await Study.create({ code, title: 'Lock check', config, status: 'recruiting' });
  const sites: Record<'AAA' | 'BBB' | 'CCC', Site> = {
    AAA: await Site.create({ studyId: study.id, code: 'AAA', name: 'Alder Clinic', timeZone: 'UTC', recruitmentTarget: 10 }),
    BBB: await Site.create({ studyId: study.id, code: 'BBB', name: 'Birch Clinic', timeZone: 'UTC', recruitmentTarget: 10 }),
    CCC: await Site.create({ studyId: study.id, code: 'CCC', name: 'Cedar Clinic', timeZone: 'UTC', recruitmentTarget: 10 }),
  };
  for (const f of FORMS) await pinForm(study.id, f, 1, { userId: null, role: 'system' });
  await ensureActivated(study);
  const all = (role: Role) => makeUser([{ role, site: null, studyId: study.id }]);
  const users = {
    coordinator: await makeUser([{ role: 'coordinator', site: 'AAA', studyId: study.id }, { role: 'coordinator', site: 'BBB', studyId: study.id }, { role: 'coordinator', site: 'CCC', studyId: study.id }]),
    monitor: await all('monitor'),
    investigator: await all('investigator'),
    dm1: await all('data_manager'),
    dm2: await all('data_manager'),
    admin: await all('admin'),
  };
  return { study, sites, users };
}

/** A participant randomised through the domain functions, reloaded with its study ID. */
export async function randomised(study: Study, site: Site, coordinatorId: number) {
  const p = await readyParticipant(study, site, { coordinatorId });
  await randomiseParticipant({ study, site, participantId: p.id, actor: { userId: coordinatorId, role: 'coordinator' } });
  return (await Participant.findByPk(p.id))!;
}

export async function client(email: string) {
  const c = new Client();
  const r = await c.signIn(email, TEST_PASSWORD);
  if (!r.ok) throw new Error(`sign-in as ${email} failed`);
  return c;
}
