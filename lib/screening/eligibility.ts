/**
 * The demo study's eligibility decision from the eligibility CRF. Pure: the server calls it when the form is
 * submitted and records the outcome and reasons in the screening log.
 *
 * Repair strength: the active arm loads the repair during active flexion, so the protocol requires a core repair of
 * four strands or more with an epitendinous suture. Figures quoted in the message are the trade's rule of thumb
 * (common practice): a two-strand repair with epitendinous suture falls from about 2500 g to about 1700 g by three
 * weeks while an active composite fist can load it with up to about 4000 g; a four-strand repair with epitendinous
 * suture keeps about 2800 g at three weeks. The treating team decides; these are orientation only.
 */
export type EligibilityDecision = { eligible: boolean; reasons: string[] };

const INCLUSION: [string, string][] = [
  ['inc_age', 'Not aged 16 to 70 years'],
  ['inc_zone2_fdp', 'Not a zone II repair of the deep flexor tendon (FDP)'],
  ['inc_core_suture', 'Core suture criterion not met'],
  ['inc_within_7_days', 'Repair not within 7 days of the injury'],
  ['inc_attend_therapy', 'Not able to attend hand therapy for the whole programme'],
];
const EXCLUSION: [string, string][] = [
  ['exc_replant', 'Replanted or revascularised finger'],
  ['exc_fracture', 'Fracture in the injured hand'],
];

export const REPAIR_STRENGTH_MESSAGE =
  'The repair is not strong enough for early active loading: the protocol requires a core repair of 4 strands or more with an epitendinous suture. ' +
  '(Rule of thumb, common practice: a 2-strand repair with epitendinous suture weakens from about 2500 g to about 1700 g by three weeks, while an active composite fist can load it with up to about 4000 g.) ' +
  'Rehabilitation loads must stay below repair strength; the treating team decides.';

/** Minimum repair for the active arm (common practice thresholds, see the module comment). */
export function repairStrongEnough(coreStrands: unknown, epitendinous: unknown): boolean {
  return typeof coreStrands === 'number' && coreStrands >= 4 && epitendinous === 'Y';
}

const withReason = (label: string, reason: unknown) => (typeof reason === 'string' && reason.trim() ? `${label}: ${reason.trim()}` : label);

/** Eligible when every inclusion criterion is met, no exclusion applies, and the repair is strong enough. */
export function decideEligibility(d: Record<string, unknown>): EligibilityDecision {
  const reasons: string[] = [];
  for (const [k, label] of INCLUSION) if (d[k] !== 'Y') reasons.push(withReason(label, d[`${k}_reason`]));
  for (const [k, label] of EXCLUSION) if (d[k] !== 'N') reasons.push(withReason(label, d[`${k}_reason`]));
  if (!repairStrongEnough(d.core_strands, d.epitendinous_suture)) reasons.push(REPAIR_STRENGTH_MESSAGE);
  return { eligible: reasons.length === 0, reasons };
}
