// Real ids for the authorisation matrix, the blinding scan, the fuzzing and the accessibility pass: one randomised
// participant at HHC with its records, consent upload and an open data query, plus people who hold a site role at
// another site (MLB) only. Built once per test file through the domain functions.
import { randomiseParticipant } from '@/lib/allocation';
import { openQuery } from '@/lib/monitoring/queries';
import { CrfRecord, Membership, Upload, User } from '@/models';
import type { Role } from '@/lib/roles';
import { demoStudy, makeUser, siteOf, TEST_PASSWORD } from '../support/factories';
import { ensureActivated, readyParticipant } from '../support/ready';
import { Client, DEMO, signedIn } from '../support/http';

/** Who makes a request: a demo role at HHC (or study-wide), a site role held only at MLB, or nobody. */
export type Actor = Role | 'anonymous' | 'coordinator@MLB' | 'therapist@MLB' | 'assessor@MLB';
export const ACTORS: Actor[] = ['anonymous', 'admin', 'data_manager', 'coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'statistician', 'coordinator@MLB', 'therapist@MLB', 'assessor@MLB'];

/** The demo account of each role (site roles at HHC). */
export const DEMO_EMAIL: Record<Role, string> = {
  admin: DEMO.admin,
  data_manager: DEMO.dataManager,
  coordinator: DEMO.coordinatorHHC,
  therapist: DEMO.therapistHHC,
  assessor: DEMO.assessorHHC,
  investigator: DEMO.investigator,
  monitor: DEMO.monitor,
  statistician: DEMO.statistician,
};

export type Ids = {
  study: string;
  site: string;
  otherSite: string;
  participant: number;
  subjectCode: string;
  upload: string;
  query: number;
  record: number;
  membership: number;
  user: number;
};

let cached: Promise<Ids> | null = null;

/** A randomised HHC participant with records, upload and query; a spare membership and user for the admin routes. */
export function fixtureIds(): Promise<Ids> {
  cached ??= (async () => {
    const study = await demoStudy();
    await ensureActivated(study);
    const hhc = await siteOf(study.id, 'HHC');
    const p = await readyParticipant(study, hhc);
    const coord = (await User.findOne({ where: { email: DEMO.coordinatorHHC } }))!;
    const view = await randomiseParticipant({ study, site: hhc, participantId: p.id, actor: { userId: coord.id, role: 'coordinator' } });
    const up = (await Upload.findOne({ where: { participantId: p.id } }))!;
    const rec = (await CrfRecord.findOne({ where: { participantId: p.id, formKey: 'baseline' } }))!;
    const monitor = (await User.findOne({ where: { email: DEMO.monitor } }))!;
    const q = await openQuery({ studyId: study.id, siteId: hhc.id, recordId: rec.id, itemPath: '', message: 'Please check the source document.', actor: { userId: monitor.id, role: 'monitor' } });
    const spare = await makeUser([{ role: 'therapist', site: 'KVH' }]);
    return {
      study: study.code,
      site: 'HHC',
      otherSite: 'MLB',
      participant: p.id,
      subjectCode: view.subjectCode,
      upload: up.publicId,
      query: (q as { id: number }).id,
      record: rec.id,
      membership: spare.memberships[0].id,
      user: spare.user.id,
    };
  })();
  return cached;
}

const clients = new Map<Actor, Promise<Client>>();

/** A signed-in client per actor (anonymous: no session), reused within a file. */
export function clientFor(actor: Actor): Promise<Client> {
  let c = clients.get(actor);
  if (!c) {
    c = (async () => {
      if (actor === 'anonymous') return new Client();
      if (actor.endsWith('@MLB')) {
        const role = actor.split('@')[0] as Role;
        const { email } = role === 'coordinator' ? { email: DEMO.coordinatorMLB } : await makeUser([{ role, site: 'MLB' }]);
        return signedIn(email, role === 'coordinator' ? undefined : TEST_PASSWORD);
      }
      return signedIn(DEMO_EMAIL[actor as Role]);
    })();
    clients.set(actor, c);
  }
  return c;
}

/** Memberships of a user, for messages. */
export async function rolesOf(userId: number) {
  return (await Membership.findAll({ where: { userId, revokedAt: null } })).map((m) => m.role);
}
