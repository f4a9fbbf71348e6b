import 'server-only';
import seedrandom from 'seedrandom';
import { Op } from 'sequelize';
import { CrfRecord, Participant, Query, RandomisationSetup, SaeReport, Site, Study, Visit } from '@/models';
import { recordScreening, setScreeningOutcome } from '@/lib/screening';
import { saveRecord, type CrfActor, type RecordView } from '@/lib/crf/records';
import { storeConsentUpload } from '@/lib/uploads';
import { activateRandomisation, randomiseParticipant } from '@/lib/allocation';
import { answerQuery, closeOrReopen, openQuery } from '@/lib/monitoring/queries';
import { signCasebook, verifyItem } from '@/lib/monitoring/verification';
import { recordSaeFollowUp } from '@/lib/monitoring/safety';
import { addDays } from '@/lib/schedule';

/**
 * Invented demo data for a study: screening, consent, randomisation, therapy sessions, blinded follow-up with
 * plausible measurements, late and missed visits, adverse events (one or more serious), queries, source data
 * verification and signatures — all through the domain functions the app uses, so allocations, derived scores,
 * visits, deviations and the audit trail are real. Every choice comes from one seeded stream, and randomisation
 * is activated with a seed derived from it, so the same seed gives the same data.
 *
 * Clinical dates are simulated (the last `months` months up to `end`); the audit trail records when each entry was
 * really made, as it must. For demonstration only: the people and values are invented.
 */

type Staff = { coordinator: number; therapist: number; assessor: number };
export type SimulationInput = {
  studyId: number;
  seed: string;
  /** Participants screened (default 120). */
  participants?: number;
  /** Length of recruitment in months, ending at `end` (default 14). */
  months?: number;
  /** Last simulated day (YYYY-MM-DD, default yesterday UTC). */
  end?: string;
  /** User ids of the staff who enter data at each site, by site code. */
  staff: Record<string, Staff>;
  investigator: number;
  monitor: number;
  dataManager: number;
  /** The investigator's password: signatures are made only when it is given. */
  investigatorPassword?: string;
};

export type SimulationSummary = {
  screened: number;
  notEligible: number;
  declined: number;
  other: number;
  randomised: number;
  therapySessions: number;
  followUps: number;
  missedVisits: number;
  adverseEvents: number;
  serious: number;
  ended: Record<string, number>;
  queries: Record<string, number>;
  verified: number;
  signatures: number;
};

const PDF = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n');
const FINGERS = ['index', 'middle', 'ring', 'little'];
const OCCUPATIONS = ['manual_heavy', 'manual_light', 'office', 'not_working', 'student', 'retired'];
const SITE_WEIGHT: Record<string, number> = { HHC: 0.3, MLB: 0.3, KVH: 0.2, NPU: 0.2 };
// Sites open one after another (months after the first), as multi-site studies usually do.
const SITE_OPENS: Record<string, number> = { HHC: 0, MLB: 1, KVH: 3, NPU: 5 };

const iso = (d: string, time = '10:00:00') => new Date(`${d}T${time}Z`);
const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));

export async function simulateStudy(input: SimulationInput): Promise<SimulationSummary> {
  const study = await Study.findByPk(input.studyId);
  if (!study) throw new Error(`Study ${input.studyId} was not found.`);
  const sites = await Site.findAll({ where: { studyId: study.id }, order: [['code', 'ASC']] });
  const rng = seedrandom(`excursion-demo:${input.seed}`);
  const u = () => rng();
  const chance = (p: number) => u() < p;
  const int = (lo: number, hi: number) => lo + Math.floor(u() * (hi - lo + 1));
  const pick = <T,>(xs: readonly T[]) => xs[Math.floor(u() * xs.length)];
  const normal = (mean: number, sd: number) => {
    const a = Math.max(u(), 1e-12);
    const b = u();
    return mean + sd * Math.sqrt(-2 * Math.log(a)) * Math.cos(2 * Math.PI * b);
  };

  const n = input.participants ?? 120;
  const months = input.months ?? 14;
  const end = input.end ?? addDays(new Date().toISOString().slice(0, 10), -1);
  const start = addDays(end, -Math.round(months * 30.44));
  const summary: SimulationSummary = { screened: 0, notEligible: 0, declined: 0, other: 0, randomised: 0, therapySessions: 0, followUps: 0, missedVisits: 0, adverseEvents: 0, serious: 0, ended: {}, queries: {}, verified: 0, signatures: 0 };

  if (!(await RandomisationSetup.findOne({ where: { studyId: study.id } }))) {
    await activateRandomisation({ study, actor: { userId: input.dataManager, role: 'data_manager' }, seed: `demo-schedule:${input.seed}` });
  }

  // Screening dates: recruitment ramps up as sites open; a site's participants come after its opening month.
  const plan = Array.from({ length: n }, () => {
    let site = sites[0];
    let r = u();
    for (const s of sites) {
      r -= SITE_WEIGHT[s.code] ?? 1 / sites.length;
      if (r <= 0) { site = s; break; }
    }
    const opens = Math.round((SITE_OPENS[site.code] ?? 0) * 30.44);
    const span = Math.round(months * 30.44) - opens - 1;
    return { site, day: opens + Math.floor(Math.sqrt(u()) * span) };
  }).sort((a, b) => a.day - b.day || a.site.code.localeCompare(b.site.code));

  const monitorActor = { userId: input.monitor, role: 'monitor' as const };
  let seq = 0;
  for (const item of plan) {
    seq++;
    const site = item.site;
    const staff = input.staff[site.code];
    if (!staff) throw new Error(`No staff given for site ${site.code}.`);
    const coord = { userId: staff.coordinator, role: 'coordinator' as const };
    const coordCrf: CrfActor = { userId: staff.coordinator, roles: ['coordinator'] };
    const screenDate = addDays(start, item.day);
    const age = clamp(Math.round(normal(38, 13)), 18, 75);
    const sex = chance(0.68) ? 'M' : 'F';
    const p = await recordScreening({ studyId: study.id, siteId: site.id, screeningNumber: `S-${site.code}-${String(seq).padStart(4, '0')}`, screeningDate: screenDate, age, sex, actor: coord });
    summary.screened++;
    let aeInstance = 0;
    const save = (formKey: string, data: Record<string, unknown>, today: string, actor = coordCrf, visitKey?: string, baseVersion: number | null = null, reason?: { code: 'query_response' | 'late_information'; text?: string }) =>
      saveRecord({ study, siteId: site.id, participantId: p.id, formKey, visitKey, instance: formKey === 'adverse_event' ? ++aeInstance : undefined, data, intent: 'submit', baseVersion, reason, actor, today });

    // Screening outcome: most are eligible; some are not, some decline, a few for other reasons.
    const fate = u();
    const repair = addDays(screenDate, -int(1, 5));
    const injury = addDays(repair, -int(0, 2));
    const eligibility: Record<string, unknown> = {
      IEDAT: screenDate, screened_by: 'Study coordinator', inc_age: 'Y', inc_zone2_fdp: 'Y', core_strands: 4, epitendinous_suture: 'Y', inc_core_suture: 'Y',
      inc_within_7_days: 'Y', inc_attend_therapy: 'Y', exc_replant: 'N', exc_fracture: 'N',
    };
    if (fate < 0.16) {
      const why = pick(['strands', 'fracture', 'late', 'attend'] as const);
      if (why === 'strands') Object.assign(eligibility, { core_strands: 2, inc_core_suture: 'N', inc_core_suture_reason: 'Two-strand core suture.' });
      if (why === 'fracture') Object.assign(eligibility, { exc_fracture: 'Y', exc_fracture_reason: 'Fracture of the middle phalanx of the same finger.' });
      if (why === 'late') Object.assign(eligibility, { inc_within_7_days: 'N', inc_within_7_days_reason: 'First seen in the hand unit more than 7 days after the repair.' });
      if (why === 'attend') Object.assign(eligibility, { inc_attend_therapy: 'N', inc_attend_therapy_reason: 'Cannot attend weekly hand therapy.' });
      await save('eligibility', eligibility, screenDate);
      summary.notEligible++;
      continue;
    }
    await save('eligibility', eligibility, screenDate);
    if (fate < 0.25) {
      await setScreeningOutcome({ studyId: study.id, siteId: site.id, participantId: p.id, outcome: 'declined', reason: pick(['Prefers not to take part in research.', 'Lives too far from the hand unit.', 'Did not want to be randomised.']), actor: coord });
      summary.declined++;
      continue;
    }
    if (fate < 0.27) {
      await setScreeningOutcome({ studyId: study.id, siteId: site.id, participantId: p.id, outcome: 'other', reason: 'Returned to their home country for treatment.', actor: coord });
      summary.other++;
      continue;
    }
    const upload = await storeConsentUpload({ studyId: study.id, siteId: site.id, participantId: p.id, bytes: PDF, actor: coord });
    await save('consent', { consent_version: 'v2.1 2026-05-01', DSSTDAT: screenDate, DSSTTIM: `${String(int(9, 16)).padStart(2, '0')}:${pick(['00', '15', '30', '45'])}`, consent_taken_by: 'Study coordinator', consent_file_id: upload.id, future_contact: chance(0.8) ? 'Y' : 'N' }, screenDate);
    await save('baseline', { AGE: age, SEX: sex, hand_dominance: chance(0.9) ? 'right' : 'left', occupation: pick(OCCUPATIONS), smoking: pick(['never', 'never', 'former', 'current']), diabetes: chance(0.08) ? 'Y' : 'N' }, screenDate);
    const nFingers = chance(0.72) ? 1 : chance(0.75) ? 2 : 3;
    const first = int(0, 4 - nFingers);
    const hand = chance(0.55) ? 'right' : 'left';
    const fingers = Array.from({ length: nFingers }, (_, i) => ({
      finger: FINGERS[first + i], zone: 'II', fdp_cut: 'Y', fds_cut: chance(0.6) ? 'Y' : 'N', core_strands: chance(0.7) ? 4 : 6, epitendinous_suture: 'Y',
      suture_material: '3-0 braided polyester', pulley_venting: chance(0.3) ? 'Y' : 'N', nerve_repair: chance(0.35) ? 'Y' : 'N',
    }));
    await save('operation', { INJDAT: injury, REPDAT: repair, hand, fingers }, screenDate);
    const randDate = addDays(screenDate, int(0, 1));
    const alloc = await randomiseParticipant({ study, site, participantId: p.id, actor: coord, at: iso(randDate, `${String(int(9, 17)).padStart(2, '0')}:${String(int(0, 59)).padStart(2, '0')}:00`) });
    summary.randomised++;
    const active = alloc.arm === 'EAM';
    const day = (k: number) => addDays(repair, k);
    const finger = fingers[0].finger;

    // What happens over follow-up: rupture (serious), other events, withdrawal or loss.
    const rupture = chance(active ? 0.07 : 0.04);
    const ruptureDay = int(10, 35);
    const adhesion = chance(0.1);
    const withdraws = chance(0.04);
    const lostAfter = chance(0.06) ? pick(['week6', 'week12']) : null;
    const effect = active ? 6 : 0; // TAM points better with active motion: invented for the demo.
    let ended = false;

    // Therapy sessions at the therapy visits (delivered by the unblinded therapist).
    const therapistCrf = { userId: staff.therapist, roles: ['therapist' as const] };
    for (const [visitKey, offset] of [['therapy_start', 3], ['week2', 14], ['week4', 28]] as const) {
      const date = day(offset + int(-1, 1));
      if (date > end || (rupture && offset > ruptureDay)) continue;
      if (withdraws && offset > 14) continue;
      const exercises = active
        ? [{ kind: 'passive_flexion', repetitions: 10 }, { kind: 'place_and_hold', repetitions: 10, hold_seconds: 5 }, { kind: 'active_flexion', repetitions: 10 }, { kind: 'active_extension', repetitions: 10 }]
        : [{ kind: 'passive_flexion', repetitions: 10 }, { kind: 'active_extension', repetitions: 10 }];
      // Now and then an exercise the phase does not allow yet: the app records a deviation for the unblinded team.
      if (chance(0.03)) exercises.push({ kind: 'resisted', repetitions: 10 });
      await save('therapy_session', { session_date: date, delivered_by: 'Hand therapist', splint_worn: 'Y', splint_hours: pick([22, 23, 24]), exercises, minutes: int(30, 60), pain: int(1, 5) }, date, therapistCrf, visitKey);
      summary.therapySessions++;
    }

    if (rupture && day(ruptureDay) <= end) {
      const d = day(ruptureDay);
      const aware = `${d}T${String(int(8, 18)).padStart(2, '0')}:${pick(['05', '20', '40'])}:00Z`;
      const rec = await save('adverse_event', {
        AETERM: `Rupture of the FDP repair, ${finger} finger`, AECAT: 'tendon_rupture', AESTDAT: d, aware_datetime: aware, AESER: 'Y', AESDTH: 'N', AESLIFE: 'N', AESHOSP: 'Y', AESDISAB: 'N', AESCONG: 'N', AESMIE: 'N',
        AESEV: 'SEVERE', AEREL: 'possible', expectedness: 'expected', AEOUT: 'RECOVERING/RESOLVING', action_taken: 'surgery',
      }, d);
      summary.adverseEvents++;
      summary.serious++;
      // Most SAEs have been followed up by the investigator; the most recent may still be waiting.
      const sae = await SaeReport.findOne({ where: { recordId: rec.id } });
      if (sae && addDays(d, 3) <= end && chance(0.85)) {
        await recordSaeFollowUp({ studyId: study.id, saeId: sae.id, siteIds: 'all', note: 'Reported to the sponsor; re-repair done, therapy restarted after review.', actor: { userId: input.investigator, role: 'investigator' } });
      }
      if (addDays(d, 7) <= end) {
        await save('end_of_participation', { DSDECOD: 'discontinued_intervention', DSSTDAT: addDays(d, 7), DSTERM: 'Tendon rupture; the programme stopped after re-repair, assessments continue.' }, addDays(d, 7));
        summary.ended.discontinued_intervention = (summary.ended.discontinued_intervention ?? 0) + 1;
        ended = true;
      }
    }
    if (adhesion && day(60) <= end) {
      await save('adverse_event', { AETERM: `Adhesions of the FDP repair, ${finger} finger`, AECAT: 'adhesions_tenolysis', AESTDAT: day(int(50, 60)), aware_datetime: `${day(60)}T11:00:00Z`, AESER: 'N', AESEV: 'MODERATE', AEREL: 'possible', expectedness: 'expected', AEOUT: 'NOT RECOVERED/NOT RESOLVED', action_taken: 'none' }, day(60));
      summary.adverseEvents++;
    }
    if (withdraws && day(20) <= end && !ended) {
      await save('end_of_participation', { DSDECOD: 'withdrew_consent', DSSTDAT: day(20), DSTERM: 'Withdrew consent for personal reasons; no further data.' }, day(20));
      summary.ended.withdrew_consent = (summary.ended.withdrew_consent ?? 0) + 1;
      continue;
    }

    // Blinded follow-up by the site's assessor: some late, a few missed, some lost.
    const assessorCrf = { userId: staff.assessor, roles: ['assessor' as const] };
    let lost = false;
    let lastSeen = randDate;
    for (const [visitKey, offset, tamBase] of [['week6', 42, 62], ['week12', 84, 72], ['week26', 182, 80]] as const) {
      const late = chance(0.08);
      const missed = chance(0.05);
      const date = day(offset + (late ? int(10, 20) : Math.round(normal(0, 2))));
      const draws = { tam: normal(0, 14), dash: normal(0, 1), grip: normal(0, 4), guess: u(), conf: int(1, 4), typo: chance(0.04) };
      if (lost || date > end) continue;
      if (lostAfter && visitKey !== 'week6' && (lostAfter === 'week6' || visitKey === 'week26')) {
        lost = true;
        continue;
      }
      if (missed) {
        summary.missedVisits++;
        continue;
      }
      const tamPct = clamp(tamBase + effect + draws.tam - (rupture ? 15 : 0), 20, 100);
      const other = { mcp: 90, pip: 105, dip: 75 };
      const scale = tamPct / 100;
      const injured = { hand, finger, mcp_flexion: Math.round(other.mcp * scale), pip_flexion: Math.round(other.pip * scale), dip_flexion: Math.round(other.dip * scale), mcp_ext_deficit: 0, pip_ext_deficit: int(0, 15), dip_ext_deficit: int(0, 10) };
      const contra = { hand: hand === 'right' ? 'left' : 'right', finger, mcp_flexion: other.mcp, pip_flexion: other.pip, dip_flexion: other.dip, mcp_ext_deficit: 0, pip_ext_deficit: 0, dip_ext_deficit: 0 };
      const dashLevel = clamp(Math.round(2.6 - offset / 120 + draws.dash), 1, 5);
      const quickdash = Array.from({ length: 11 }, (_, i) => clamp(dashLevel + (i % 3 === 0 ? 1 : 0) - (i % 4 === 0 ? 1 : 0), 1, 5));
      const healthyGrip = sex === 'M' ? 44 : 28;
      const injuredGrip = clamp(healthyGrip * (0.35 + offset / 400) + draws.grip, 4, 60);
      const grips = (g: number) => [g, g + 1, g - 0.5].map((x) => Math.round(clamp(x, 3, 65) * 2) / 2);
      const gripInjured = grips(injuredGrip);
      // A few readings are entered with a slipped digit: the soft check opens a query, answered later by correction.
      const entered = draws.typo ? [75 + (gripInjured[0] % 10), gripInjured[1], gripInjured[2]] : gripInjured;
      // Assessors guess the programme little better than chance when the blinding holds.
      // A right guess below 0.65, a wrong one above.
      const named = (draws.guess < 0.65) === active ? 'active' : 'passive';
      const guess = draws.guess < 0.3 ? 'unknown' : `guess_${named}`;
      const data: Record<string, unknown> = {
        VISDAT: date, goniometry: [injured, contra],
        [`grip_${hand}_kg`]: entered, [`grip_${contra.hand}_kg`]: grips(healthyGrip),
        quickdash, pain: clamp(Math.round(4 - offset / 60 + draws.dash), 0, 10),
        guess_arm: guess, ...(guess === 'unknown' ? {} : { guess_confidence: draws.conf }),
      };
      const rec: RecordView = await save('follow_up', data, date, assessorCrf, visitKey);
      summary.followUps++;
      lastSeen = date;
      if (draws.typo && addDays(date, 10) <= end) {
        // The site corrects the value with the reason "query response", which answers the automatic query.
        await save('follow_up', { ...data, [`grip_${hand}_kg`]: gripInjured }, addDays(date, 10), assessorCrf, visitKey, rec.lockVersion, { code: 'query_response', text: 'Misread the dynamometer; corrected from the worksheet.' });
      }
    }
    if (lost && !ended && addDays(lastSeen, 120) <= end) {
      await save('end_of_participation', { DSDECOD: 'lost_to_follow_up', DSSTDAT: addDays(lastSeen, 120), DSTERM: 'No reply to three calls and a letter.', last_contact_date: lastSeen }, addDays(lastSeen, 120));
      summary.ended.lost_to_follow_up = (summary.ended.lost_to_follow_up ?? 0) + 1;
      ended = true;
    }
    if (!ended && day(196) <= end && !lost) {
      await save('end_of_participation', { DSDECOD: 'completed', DSSTDAT: day(196), last_contact_date: day(196) }, day(196));
      summary.ended.completed = (summary.ended.completed ?? 0) + 1;
    }
  }

  // Monitoring: the monitor verifies forms of a sample of participants, opens some queries; the site answers most;
  // the monitor closes most answered ones. The investigator signs the casebooks of those who completed.
  const randomised = await Participant.findAll({ where: { studyId: study.id, subjectCode: { [Op.ne]: null } }, order: [['id', 'ASC']] });
  for (const p of randomised) {
    const recs = await CrfRecord.findAll({ where: { participantId: p.id, status: 'submitted' }, order: [['id', 'ASC']] });
    const staff = input.staff[sites.find((s) => s.id === p.siteId)!.code];
    if (chance(0.4)) {
      for (const r of recs.filter((x) => ['consent', 'eligibility', 'baseline', 'operation'].includes(x.formKey))) {
        await verifyItem({ studyId: study.id, siteId: p.siteId, recordId: r.id, itemPath: '', actor: monitorActor });
        summary.verified++;
      }
    }
    const fu = recs.find((x) => x.formKey === 'follow_up');
    if (fu && chance(0.15)) {
      const q = await openQuery({ studyId: study.id, siteId: p.siteId, recordId: fu.id, itemPath: '/pain', message: 'The pain score differs from the clinic letter of the same day; please check the source.', actor: monitorActor });
      if (chance(0.7)) {
        await answerQuery({ studyId: study.id, siteId: p.siteId, queryId: q.id, text: 'Checked against the source worksheet: the value entered is right.', actor: { userId: staff.coordinator, role: 'coordinator' } });
        if (chance(0.7)) await closeOrReopen({ studyId: study.id, siteId: p.siteId, queryId: q.id, text: 'Thank you, resolved.', reopen: false, actor: monitorActor });
      }
    }
    if (input.investigatorPassword && recs.some((x) => x.formKey === 'end_of_participation' && x.data.DSDECOD === 'completed') && chance(0.6)) {
      await signCasebook({ studyId: study.id, siteId: p.siteId, participantId: p.id, password: input.investigatorPassword, actor: { userId: input.investigator, role: 'investigator' } });
      summary.signatures++;
    }
  }
  const qs = await Query.findAll({ where: { studyId: study.id }, attributes: ['state'] });
  for (const q of qs) summary.queries[q.state] = (summary.queries[q.state] ?? 0) + 1;
  return summary;
}

/** Counts of what a study holds, for checking that a simulation is reproducible. */
export async function studyCounts(studyId: number) {
  const byOutcome: Record<string, number> = {};
  for (const p of await Participant.findAll({ where: { studyId }, attributes: ['screeningOutcome', 'status'] })) {
    byOutcome[`${p.screeningOutcome}/${p.status}`] = (byOutcome[`${p.screeningOutcome}/${p.status}`] ?? 0) + 1;
  }
  const records: Record<string, number> = {};
  for (const r of await CrfRecord.findAll({ where: { studyId, status: 'submitted' }, attributes: ['formKey', 'visitKey'] })) {
    records[`${r.formKey}@${r.visitKey}`] = (records[`${r.formKey}@${r.visitKey}`] ?? 0) + 1;
  }
  const visitsDone = await Visit.count({ where: { studyId, completedOn: { [Op.ne]: null } } });
  const queries: Record<string, number> = {};
  for (const q of await Query.findAll({ where: { studyId }, attributes: ['state', 'source'] })) queries[`${q.source}/${q.state}`] = (queries[`${q.source}/${q.state}`] ?? 0) + 1;
  return { byOutcome, records, visitsDone, queries, saes: await SaeReport.count({ where: { studyId } }) };
}
