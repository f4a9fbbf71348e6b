// A study of its own for the report tests: one site, six randomised participants with known week-12 follow-ups
// (one only a draft), one tendon rupture, one emergency unblinding, and users in every role that matters here.
import { Site, Study } from '@/models';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { pinForm } from '@/lib/crf/definitions';
import { emergencyUnblind, randomiseParticipant } from '@/lib/allocation';
import { saveRecord } from '@/lib/crf/records';
import { makeUser, TEST_PASSWORD, uniq } from '../support/factories';
import { Client } from '../support/http';
import { ensureActivated, example, readyParticipant } from '../support/ready';

const TODAY = '2026-12-02';
export type Who = 'coordinator' | 'assessor' | 'statistician' | 'dataManager' | 'investigator' | 'monitor';

export type ReportStudy = {
  study: Study;
  /** A second study whose configuration blinds the statistician. */
  blindStudy: Study;
  site: Site;
  users: Record<Who, { email: string; user: { id: number } }>;
  /** Per participant id: the expected TAM % of the other hand at week 12 (null: missing), rupture, unblinded. */
  expected: Map<number, { pct: number | null; rupture: boolean; unblinded: boolean }>;
  as: (who: Who) => Promise<Client>;
};

/** A follow-up whose injured finger (right index, as readyParticipant repairs it) has PIP flexion `pip`. */
function followUp(pip: number) {
  return {
    ...example('follow_up'),
    VISDAT: '2026-11-30',
    goniometry: [
      // Injured: 80 + pip + 40 − (0 + 15 + 10) = 95 + pip degrees (TAM-F1). Other hand: 90 + 100 + 70 = 260 degrees.
      { hand: 'right', finger: 'index', mcp_flexion: 80, pip_flexion: pip, dip_flexion: 40, mcp_ext_deficit: 0, pip_ext_deficit: 15, dip_ext_deficit: 10 },
      { hand: 'left', finger: 'index', mcp_flexion: 90, pip_flexion: 100, dip_flexion: 70, mcp_ext_deficit: 0, pip_ext_deficit: 0, dip_ext_deficit: 0 },
    ],
  };
}
const round2 = (x: number) => Math.round(x * 100) / 100;

export async function buildReportStudy(prefix = 'REP'): Promise<ReportStudy> {
  const code = uniq(prefix).toUpperCase();
  // A study-ID prefix of its own keeps its IDs apart from other tests' sites named AAA when reading the database.
  const config = { ...DEMO_STUDY.config, randomisation: { ...DEMO_STUDY.config.randomisation, subjectPrefix: code } };
  const study = await Study.create({ code, title: 'Report check', config, status: 'recruiting' });
  const site = await Site.create({ studyId: study.id, code: 'AAA', name: 'Alder Clinic', timeZone: 'UTC', recruitmentTarget: 10 });
  // The coordinator belongs to a second site: the participants' past visits at AAA then have nobody to remind, so
  // these studies add no e-mail to the reminder runs of other test files.
  await Site.create({ studyId: study.id, code: 'BBB', name: 'Birch Clinic', timeZone: 'UTC', recruitmentTarget: 10 });
  for (const f of ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session']) {
    await pinForm(study.id, f, 1, { userId: null, role: 'system' });
  }
  await ensureActivated(study);
  const blindStudy = await Study.create({ code: uniq(`${prefix}B`).toUpperCase(), title: 'Blinded statistician', config: { ...config, blindedRoles: ['assessor', 'statistician'] }, status: 'recruiting' });
  const users = {
    coordinator: await makeUser([{ role: 'coordinator', site: 'BBB', studyId: study.id }]),
    assessor: await makeUser([{ role: 'assessor', site: 'AAA', studyId: study.id }]),
    statistician: await makeUser([{ role: 'statistician', site: null, studyId: study.id }, { role: 'statistician', site: null, studyId: blindStudy.id }]),
    dataManager: await makeUser([{ role: 'data_manager', site: null, studyId: study.id }]),
    investigator: await makeUser([{ role: 'investigator', site: null, studyId: study.id }]),
    monitor: await makeUser([{ role: 'monitor', site: null, studyId: study.id }]),
  };
  const coord = { userId: users.coordinator.user.id, roles: ['coordinator' as const] };
  const assessor = { userId: users.assessor.user.id, roles: ['assessor' as const] };
  const expected: ReportStudy['expected'] = new Map();
  const pips = [60, 70, 80, 90, 100, null];
  for (let i = 0; i < pips.length; i++) {
    const p = await readyParticipant(study, site, { coordinatorId: users.coordinator.user.id });
    await randomiseParticipant({ study, site, participantId: p.id, actor: { userId: users.coordinator.user.id, role: 'coordinator' } });
    const pip = pips[i];
    // A draft is not data: the last participant's week-12 visit stays missing.
    await saveRecord({ study, siteId: site.id, participantId: p.id, formKey: 'follow_up', visitKey: 'week12', data: followUp(pip ?? 110), intent: pip === null ? 'draft' : 'submit', baseVersion: null, actor: assessor, today: TODAY });
    const rupture = i === 1;
    if (rupture) {
      await saveRecord({ study, siteId: site.id, participantId: p.id, formKey: 'adverse_event', data: { ...example('adverse_event'), AECAT: 'tendon_rupture', AETERM: 'Rupture of the FDP repair' }, intent: 'submit', baseVersion: null, actor: coord, today: TODAY });
    }
    const unblinded = i === 2;
    if (unblinded) {
      await emergencyUnblind({ study, site, participantId: p.id, reason: 'Suspected rupture: the surgeon needs the programme for planning', actor: { userId: users.investigator.user.id, role: 'investigator' } });
    }
    expected.set(p.id, { pct: pip === null ? null : round2(((95 + pip) / 260) * 100), rupture, unblinded });
  }
  const as = async (who: Who) => {
    const c = new Client();
    const r = await c.signIn(users[who].email, TEST_PASSWORD);
    if (!r.ok) throw new Error(`sign-in as ${who} failed`);
    return c;
  };
  return { study, blindStudy, site, users, expected, as };
}
