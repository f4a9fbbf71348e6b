/**
 * CONSORT flow counts and a printable flow diagram, computed from one fact row per screened person.
 *
 * Where each fact goes (CONSORT 2010 flow diagram wording):
 * - Assessed for eligibility: every row, whatever its screening outcome.
 * - Excluded: rows not randomised whose screening outcome is not_eligible ("Not meeting inclusion
 *   criteria"), declined ("Declined to participate") or other ("Other reasons"). Reasons come from
 *   exclusionReasons; a person with several failed criteria counts once under each distinct reason,
 *   so the reason counts may add up to more than the excluded total.
 * - Not yet randomised (`notYetRandomised`): rows whose screening is pending, or eligible without an
 *   allocation yet. They are assessed, neither excluded nor randomised, so
 *   assessed = excluded.total + randomised + notYetRandomised.
 * - Randomised / Allocated: rows with an arm. Only an eligible screening can carry an arm.
 * - Received allocated intervention: receivedAllocated true; "Did not receive allocated intervention
 *   (give reasons)": false, with notReceivedReason; null means not yet recorded and counts in neither.
 * - "Lost to follow-up (give reasons)": endStatus lost_to_follow_up, withdrawn_follow_up or
 *   withdrew_consent (each ends the outcome data). Reason: endReason, else the status in words.
 * - "Discontinued intervention (give reasons)": endStatus discontinued_intervention. Reason: endReason.
 * - Other end of participation (`otherEnd`): endStatus died or other; shown in the follow-up box so
 *   that every randomised person stays accounted for. completed and null count in no follow-up box.
 * - Analysed: analysed true; excluded from analysis = allocated − analysed, with analysisExclusionReason.
 *
 * Pooled counts (for blinded roles) have a single group 'all' and never carry an arm code or label:
 * free-text reasons that name an arm are replaced by a neutral wording before they are counted.
 */
import { InvalidInputError } from './errors';

/** Screening outcome of one screened person. */
export type ScreeningOutcome = 'pending' | 'eligible' | 'not_eligible' | 'declined' | 'other';

/** How a randomised participant's participation ended (null while still in the study). */
export type EndStatus =
  | 'completed'
  | 'discontinued_intervention'
  | 'withdrawn_follow_up'
  | 'withdrew_consent'
  | 'lost_to_follow_up'
  | 'died'
  | 'other';

/** One screened person's facts, as the flow diagram needs them. */
export interface ConsortFact {
  screeningOutcome: ScreeningOutcome;
  exclusionReasons?: string[];
  /** Allocated arm code; null when not randomised. */
  arm: string | null;
  /** Whether the allocated intervention was started; null when not randomised or not yet recorded. */
  receivedAllocated: boolean | null;
  notReceivedReason?: string | null;
  endStatus: EndStatus | null;
  endReason?: string | null;
  /** Included in the analysis the diagram reports (for example the primary-outcome analysis). */
  analysed: boolean;
  analysisExclusionReason?: string | null;
}

/** The fact rows of a study (or site). */
export type ConsortInput = ConsortFact[];

/** A reason and how many people it applies to. */
export interface ReasonCount {
  reason: string;
  n: number;
}

/** Options of {@link consortCounts}. */
export interface ConsortOptions {
  /** The study's arms in display order. */
  arms: { code: string; label: string }[];
  /** One group of all randomised participants, without any arm (for blinded roles). */
  pooled: boolean;
  /** Longest reason list kept; further reasons are combined into one entry (default 5). */
  maxReasons?: number;
}

/** Post-randomisation counts of one group (an arm, or everyone when pooled). */
export interface ConsortGroup {
  key: string;
  label: string;
  allocated: number;
  received: number;
  notReceived: number;
  notReceivedReasons: ReasonCount[];
  lostToFollowUp: number;
  lostToFollowUpReasons: ReasonCount[];
  discontinued: number;
  discontinuedReasons: ReasonCount[];
  otherEnd: number;
  otherEndReasons: ReasonCount[];
  analysed: number;
  excludedFromAnalysis: number;
  excludedFromAnalysisReasons: ReasonCount[];
}

/** The numbers of a CONSORT flow diagram. */
export interface ConsortCounts {
  pooled: boolean;
  assessed: number;
  notYetRandomised: number;
  excluded: {
    total: number;
    notMeetingCriteria: number;
    declined: number;
    other: number;
    reasons: ReasonCount[];
  };
  randomised: number;
  groups: ConsortGroup[];
}

export const POOLED_KEY = 'all';
export const POOLED_LABEL = 'All randomised';
export const REASON_NOT_RECORDED = 'Reason not recorded';
export const REASON_WITHHELD = 'Reason withheld in the pooled report';
export const OTHER_REASONS_COMBINED = 'All other reasons';
const DEFAULT_MAX_REASONS = 5;

const OUTCOMES: readonly ScreeningOutcome[] = ['pending', 'eligible', 'not_eligible', 'declined', 'other'];
const END_STATUSES: readonly EndStatus[] = [
  'completed',
  'discontinued_intervention',
  'withdrawn_follow_up',
  'withdrew_consent',
  'lost_to_follow_up',
  'died',
  'other',
];
const LOST_STATUSES: readonly EndStatus[] = ['lost_to_follow_up', 'withdrawn_follow_up', 'withdrew_consent'];
const STATUS_WORDS: Record<EndStatus, string> = {
  completed: 'Completed',
  discontinued_intervention: REASON_NOT_RECORDED,
  withdrawn_follow_up: 'Withdrawn from follow-up',
  withdrew_consent: 'Withdrew consent',
  lost_to_follow_up: 'Lost to follow-up',
  died: 'Died',
  other: REASON_NOT_RECORDED,
};

function shown(value: unknown): string {
  if (typeof value === 'string') return `"${value}"`;
  if (value === undefined) return 'nothing';
  if (Array.isArray(value)) return 'a list';
  return String(value);
}

function isOptionalText(value: unknown): boolean {
  return value === undefined || value === null || typeof value === 'string';
}

function escapeRegExp(text: string): string {
  return text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/** Tally of reasons, most frequent first (ties alphabetical), cut to maxReasons with the rest combined. */
class Tally {
  private readonly counts = new Map<string, number>();
  add(reason: string): void {
    this.counts.set(reason, (this.counts.get(reason) ?? 0) + 1);
  }
  list(maxReasons: number): ReasonCount[] {
    const all = [...this.counts.entries()]
      .map(([reason, n]) => ({ reason, n }))
      .sort((a, b) => b.n - a.n || (a.reason < b.reason ? -1 : a.reason > b.reason ? 1 : 0));
    if (all.length <= maxReasons) return all;
    // Keep maxReasons − 1 named reasons so the list, combined entry included, is maxReasons long.
    const kept = all.slice(0, Math.max(0, maxReasons - 1));
    const rest = all.slice(kept.length).reduce((sum, r) => sum + r.n, 0);
    return [...kept, { reason: OTHER_REASONS_COMBINED, n: rest }];
  }
}

interface GroupTally {
  key: string;
  label: string;
  allocated: number;
  received: number;
  notReceived: number;
  notReceivedReasons: Tally;
  lostToFollowUp: number;
  lostToFollowUpReasons: Tally;
  discontinued: number;
  discontinuedReasons: Tally;
  otherEnd: number;
  otherEndReasons: Tally;
  analysed: number;
  excludedFromAnalysisReasons: Tally;
}

function newGroup(key: string, label: string): GroupTally {
  return {
    key,
    label,
    allocated: 0,
    received: 0,
    notReceived: 0,
    notReceivedReasons: new Tally(),
    lostToFollowUp: 0,
    lostToFollowUpReasons: new Tally(),
    discontinued: 0,
    discontinuedReasons: new Tally(),
    otherEnd: 0,
    otherEndReasons: new Tally(),
    analysed: 0,
    excludedFromAnalysisReasons: new Tally(),
  };
}

function validateArms(options: ConsortOptions): { code: string; label: string }[] {
  if (typeof options !== 'object' || options === null) {
    throw new InvalidInputError('The CONSORT counts need options with arms and pooled.');
  }
  if (typeof options.pooled !== 'boolean') {
    throw new InvalidInputError(`The option pooled must be true or false (got ${shown(options.pooled)}).`);
  }
  if (!Array.isArray(options.arms)) throw new InvalidInputError('The option arms must be a list of arms.');
  const seen = new Set<string>();
  options.arms.forEach((arm, i) => {
    const ok =
      typeof arm === 'object' &&
      arm !== null &&
      typeof arm.code === 'string' &&
      arm.code.trim() !== '' &&
      typeof arm.label === 'string' &&
      arm.label.trim() !== '';
    if (!ok) throw new InvalidInputError(`Arm ${i + 1} must have a non-empty code and label.`);
    if (seen.has(arm.code)) throw new InvalidInputError(`Arm code "${arm.code}" is listed twice.`);
    seen.add(arm.code);
  });
  if (!options.pooled && options.arms.length === 0) {
    throw new InvalidInputError('Counts by arm need the list of the study’s arms.');
  }
  return options.arms;
}

function validateFact(fact: unknown, row: number, armCodes: Set<string>, pooled: boolean): ConsortFact {
  const where = `Participant row ${row}`;
  if (typeof fact !== 'object' || fact === null) throw new InvalidInputError(`${where} must be an object.`);
  const f = fact as ConsortFact;
  if (!OUTCOMES.includes(f.screeningOutcome)) {
    throw new InvalidInputError(`${where} has an unknown screening outcome ${shown(f.screeningOutcome)}.`);
  }
  if (f.exclusionReasons !== undefined && (!Array.isArray(f.exclusionReasons) || !f.exclusionReasons.every((r) => typeof r === 'string'))) {
    throw new InvalidInputError(`${where}: exclusionReasons must be a list of texts.`);
  }
  if (f.arm !== null && (typeof f.arm !== 'string' || f.arm.trim() === '')) {
    throw new InvalidInputError(`${where}: the allocation must be an arm code or null.`);
  }
  if (f.arm !== null && armCodes.size > 0 && !armCodes.has(f.arm)) {
    // A pooled report goes to blinded users, so its error message must not repeat the allocation.
    throw new InvalidInputError(
      pooled ? `${where} has an allocation that is not one of the study’s arms.` : `${where} has allocation "${f.arm}", which is not one of the study’s arms.`,
    );
  }
  if (f.arm !== null && f.screeningOutcome !== 'eligible') {
    throw new InvalidInputError(`${where} is randomised but its screening outcome is ${f.screeningOutcome}, not eligible.`);
  }
  if (f.receivedAllocated !== null && typeof f.receivedAllocated !== 'boolean') {
    throw new InvalidInputError(`${where}: receivedAllocated must be true, false or null (got ${shown(f.receivedAllocated)}).`);
  }
  if (f.endStatus !== null && !END_STATUSES.includes(f.endStatus)) {
    throw new InvalidInputError(`${where} has an unknown end status ${shown(f.endStatus)}.`);
  }
  if (typeof f.analysed !== 'boolean') {
    throw new InvalidInputError(`${where}: analysed must be true or false (got ${shown(f.analysed)}).`);
  }
  for (const key of ['notReceivedReason', 'endReason', 'analysisExclusionReason'] as const) {
    if (!isOptionalText(f[key])) throw new InvalidInputError(`${where}: ${key} must be a text or null.`);
  }
  if (f.arm === null) {
    if (f.receivedAllocated !== null) throw new InvalidInputError(`${where} is not randomised but has receivedAllocated set.`);
    if (f.endStatus !== null) throw new InvalidInputError(`${where} is not randomised but has an end status.`);
    if (f.analysed) throw new InvalidInputError(`${where} is not randomised but is marked as analysed.`);
  }
  return f;
}

/** Count the CONSORT flow boxes, by arm or pooled, from one fact row per screened person. */
export function consortCounts(input: ConsortInput, options: ConsortOptions): ConsortCounts {
  const arms = validateArms(options);
  const pooled = options.pooled;
  const maxReasons = options.maxReasons ?? DEFAULT_MAX_REASONS;
  if (!Number.isSafeInteger(maxReasons) || maxReasons < 1) {
    throw new InvalidInputError(`The option maxReasons must be a whole number of at least 1 (got ${shown(maxReasons)}).`);
  }
  if (!Array.isArray(input)) throw new InvalidInputError('The CONSORT counts need a list of participant rows.');
  const armCodes = new Set(arms.map((a) => a.code));
  const facts = input.map((fact, i) => validateFact(fact, i + 1, armCodes, pooled));

  // Whole-word matches of any arm code (case as written) or label (any case), to keep arms out of pooled reasons.
  const armPatterns = arms.flatMap((a) => [
    new RegExp(`(?<![\\p{L}\\p{N}])${escapeRegExp(a.code.trim())}(?![\\p{L}\\p{N}])`, 'u'),
    new RegExp(`(?<![\\p{L}\\p{N}])${escapeRegExp(a.label.trim())}(?![\\p{L}\\p{N}])`, 'iu'),
  ]);
  const reasonText = (value: string | null | undefined, fallback: string): string => {
    const text = typeof value === 'string' ? value.trim() : '';
    const reason = text === '' ? fallback : text;
    return pooled && armPatterns.some((p) => p.test(reason)) ? REASON_WITHHELD : reason;
  };

  const groups = new Map<string, GroupTally>();
  if (pooled) groups.set(POOLED_KEY, newGroup(POOLED_KEY, POOLED_LABEL));
  else for (const a of arms) groups.set(a.code, newGroup(a.code, a.label));

  const excludedReasons = new Tally();
  let notMeetingCriteria = 0;
  let declined = 0;
  let other = 0;
  let notYetRandomised = 0;
  let randomised = 0;

  for (const f of facts) {
    if (f.arm === null) {
      if (f.screeningOutcome === 'pending' || f.screeningOutcome === 'eligible') {
        notYetRandomised += 1;
        continue;
      }
      if (f.screeningOutcome === 'not_eligible') notMeetingCriteria += 1;
      else if (f.screeningOutcome === 'declined') declined += 1;
      else other += 1;
      // Each distinct reason once per person, however often it was written.
      const reasons = new Set((f.exclusionReasons ?? []).map((r) => reasonText(r, REASON_NOT_RECORDED)));
      if (reasons.size === 0) reasons.add(REASON_NOT_RECORDED);
      for (const r of reasons) excludedReasons.add(r);
      continue;
    }

    randomised += 1;
    const g = groups.get(pooled ? POOLED_KEY : f.arm);
    if (!g) throw new InvalidInputError(`Participant allocation "${f.arm}" has no group.`);
    g.allocated += 1;
    if (f.receivedAllocated === true) g.received += 1;
    else if (f.receivedAllocated === false) {
      g.notReceived += 1;
      g.notReceivedReasons.add(reasonText(f.notReceivedReason, REASON_NOT_RECORDED));
    }
    if (f.endStatus !== null) {
      const reason = reasonText(f.endReason, STATUS_WORDS[f.endStatus]);
      if (LOST_STATUSES.includes(f.endStatus)) {
        g.lostToFollowUp += 1;
        g.lostToFollowUpReasons.add(reason);
      } else if (f.endStatus === 'discontinued_intervention') {
        g.discontinued += 1;
        g.discontinuedReasons.add(reason);
      } else if (f.endStatus === 'died' || f.endStatus === 'other') {
        g.otherEnd += 1;
        g.otherEndReasons.add(reason);
      }
    }
    if (f.analysed) g.analysed += 1;
    else g.excludedFromAnalysisReasons.add(reasonText(f.analysisExclusionReason, REASON_NOT_RECORDED));
  }

  return {
    pooled,
    assessed: facts.length,
    notYetRandomised,
    excluded: {
      total: notMeetingCriteria + declined + other,
      notMeetingCriteria,
      declined,
      other,
      reasons: excludedReasons.list(maxReasons),
    },
    randomised,
    groups: [...groups.values()].map((g) => ({
      key: g.key,
      label: g.label,
      allocated: g.allocated,
      received: g.received,
      notReceived: g.notReceived,
      notReceivedReasons: g.notReceivedReasons.list(maxReasons),
      lostToFollowUp: g.lostToFollowUp,
      lostToFollowUpReasons: g.lostToFollowUpReasons.list(maxReasons),
      discontinued: g.discontinued,
      discontinuedReasons: g.discontinuedReasons.list(maxReasons),
      otherEnd: g.otherEnd,
      otherEndReasons: g.otherEndReasons.list(maxReasons),
      analysed: g.analysed,
      excludedFromAnalysis: g.allocated - g.analysed,
      excludedFromAnalysisReasons: g.excludedFromAnalysisReasons.list(maxReasons),
    })),
  };
}

// ---------------------------------------------------------------------------------------------------
// Flow diagram

const FONT_SIZE = 12;
const LINE_HEIGHT = 16;
const PAD = 8;
const BOX_WIDTH = 320;
const GAP = 30;
const MARGIN = 20;
const STAGE_COLUMN = 90;
const VERTICAL_GAP = 34;
// A generous average glyph width for a 12 px sans-serif face, so wrapped lines stay inside their box.
const CHAR_WIDTH = 6.6;
const MAX_CHARS = Math.floor((BOX_WIDTH - 2 * PAD) / CHAR_WIDTH);
const STROKE = '#222222';

/** Text safe inside an XML element or attribute. */
export function escapeXml(text: string): string {
  return text
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&apos;');
}

// Indent step in pixels, and the characters it takes from a line.
const INDENT_PX = 12;
const INDENT_CHARS = Math.ceil(INDENT_PX / CHAR_WIDTH);

interface Line {
  text: string;
  bold?: boolean;
  /** Indent level; continuation lines of a wrapped entry sit one level deeper than its first line. */
  indent: number;
}

/** Break an entry into lines that fit a box at the given indent; its count "(n = x)" is never split. */
function wrap(text: string, n: number, indent: number, bold = false): Line[] {
  const lines: Line[] = [];
  let current = '';
  const level = () => (lines.length ? indent + 1 : indent);
  const room = () => MAX_CHARS - level() * INDENT_CHARS;
  const push = () => {
    lines.push({ text: current, bold, indent: level() });
    current = '';
  };
  const tokens = [...text.split(/\s+/).filter((part) => part !== ''), `(n = ${n})`];
  for (const w of tokens) {
    let word = w;
    if (current && current.length + 1 + word.length > room()) push();
    // Words longer than a line are cut, so no reason text can push a box wider than the page.
    while (word.length > room()) {
      const r = room();
      current = word.slice(0, r);
      word = word.slice(r);
      push();
    }
    if (word) current = current ? `${current} ${word}` : word;
  }
  if (current) push();
  return lines;
}

function heading(text: string, n: number): Line[] {
  return wrap(text, n, 0, true);
}

function item(text: string, n: number): Line[] {
  return wrap(text, n, 0);
}

function reasonLines(reasons: ReasonCount[]): Line[] {
  return reasons.flatMap((r) => wrap(`– ${r.reason}`, r.n, 1));
}

function boxHeight(lines: Line[]): number {
  return 2 * PAD + lines.length * LINE_HEIGHT;
}

function drawBox(x: number, y: number, height: number, lines: Line[]): string {
  const rect = `<rect x="${x}" y="${y}" width="${BOX_WIDTH}" height="${height}" fill="#ffffff" stroke="${STROKE}" stroke-width="1"/>`;
  const texts = lines.map((line, i) => {
    const weight = line.bold ? ' font-weight="bold"' : '';
    // Baseline of line i: top padding plus i line heights plus the font size (text hangs above its baseline).
    const baseline = y + PAD + i * LINE_HEIGHT + FONT_SIZE;
    return `<text x="${x + PAD + line.indent * INDENT_PX}" y="${baseline}"${weight}>${escapeXml(line.text)}</text>`;
  });
  return [rect, ...texts].join('\n');
}

function arrow(x1: number, y1: number, x2: number, y2: number): string {
  const angle = Math.atan2(y2 - y1, x2 - x1);
  const size = 6;
  const p = (a: number) => `${round(x2 - size * Math.cos(angle - a))},${round(y2 - size * Math.sin(angle - a))}`;
  return (
    `<line x1="${x1}" y1="${y1}" x2="${x2}" y2="${y2}" stroke="${STROKE}" stroke-width="1"/>\n` +
    `<polygon points="${x2},${y2} ${p(Math.PI / 7)} ${p(-Math.PI / 7)}" fill="${STROKE}"/>`
  );
}

function line(x1: number, y1: number, x2: number, y2: number): string {
  return `<line x1="${x1}" y1="${y1}" x2="${x2}" y2="${y2}" stroke="${STROKE}" stroke-width="1"/>`;
}

function round(v: number): number {
  return Math.round(v * 100) / 100;
}

function stageLabel(text: string, y: number): string {
  return `<text x="${MARGIN}" y="${y}" font-weight="bold">${escapeXml(text)}</text>`;
}

/** A printable SVG of the CONSORT flow diagram for the given counts (plain boxes and text, no colour coding). */
export function consortSvg(counts: ConsortCounts): string {
  if (typeof counts !== 'object' || counts === null || !Array.isArray(counts.groups) || counts.groups.length === 0) {
    throw new InvalidInputError('The flow diagram needs CONSORT counts with at least one group.');
  }
  const groups = counts.groups;
  const contentLeft = MARGIN + STAGE_COLUMN;
  const contentWidth = groups.length * BOX_WIDTH + (groups.length - 1) * GAP;
  const centre = contentLeft + contentWidth / 2;
  const excludedX = centre + GAP;
  const width = Math.ceil(Math.max(contentLeft + contentWidth, excludedX + BOX_WIDTH) + MARGIN);
  const topX = centre - BOX_WIDTH / 2;
  const parts: string[] = [];

  // Enrolment
  let y = MARGIN;
  const assessedLines = heading('Assessed for eligibility', counts.assessed);
  if (counts.notYetRandomised > 0) {
    assessedLines.push(...item('Screening open or awaiting randomisation', counts.notYetRandomised));
  }
  const assessedH = boxHeight(assessedLines);
  parts.push(stageLabel('Enrolment', y + PAD + FONT_SIZE));
  parts.push(drawBox(topX, y, assessedH, assessedLines));
  const assessedBottom = y + assessedH;

  const excludedLines: Line[] = [
    ...heading('Excluded', counts.excluded.total),
    ...item('Not meeting inclusion criteria', counts.excluded.notMeetingCriteria),
    ...item('Declined to participate', counts.excluded.declined),
    ...item('Other reasons', counts.excluded.other),
  ];
  if (counts.excluded.reasons.length) {
    excludedLines.push({ text: 'Reasons:', indent: 0 }, ...reasonLines(counts.excluded.reasons));
  }
  const excludedY = assessedBottom + VERTICAL_GAP / 2;
  const excludedH = boxHeight(excludedLines);
  parts.push(drawBox(excludedX, excludedY, excludedH, excludedLines));
  parts.push(arrow(centre, excludedY + excludedH / 2, excludedX, excludedY + excludedH / 2));

  const randomisedY = excludedY + excludedH + VERTICAL_GAP / 2;
  const randomisedLines = heading('Randomised', counts.randomised);
  const randomisedH = boxHeight(randomisedLines);
  parts.push(arrow(centre, assessedBottom, centre, randomisedY));
  parts.push(drawBox(topX, randomisedY, randomisedH, randomisedLines));
  y = randomisedY + randomisedH;

  // One row of boxes per stage after randomisation; boxes in a row share the tallest box's height.
  const columnX = groups.map((_, i) => contentLeft + i * (BOX_WIDTH + GAP));
  const columnCentre = columnX.map((x) => x + BOX_WIDTH / 2);
  const rows: { stage: string; lines: (g: ConsortGroup) => Line[] }[] = [
    {
      stage: 'Allocation',
      lines: (g) => {
        const out = counts.pooled ? heading(g.label, g.allocated) : heading(`Allocated to ${g.label}`, g.allocated);
        out.push(...item('Received allocated intervention', g.received));
        out.push(...item('Did not receive allocated intervention', g.notReceived), ...reasonLines(g.notReceivedReasons));
        const unknown = g.allocated - g.received - g.notReceived;
        if (unknown > 0) out.push(...item('Start of intervention not yet recorded', unknown));
        return out;
      },
    },
    {
      stage: 'Follow-up',
      lines: (g) => {
        const out = [...item('Lost to follow-up', g.lostToFollowUp), ...reasonLines(g.lostToFollowUpReasons)];
        out.push(...item('Discontinued intervention', g.discontinued), ...reasonLines(g.discontinuedReasons));
        if (g.otherEnd > 0) out.push(...item('Other end of participation', g.otherEnd), ...reasonLines(g.otherEndReasons));
        return out;
      },
    },
    {
      stage: 'Analysis',
      lines: (g) => [
        ...heading('Analysed', g.analysed),
        ...item('Excluded from analysis', g.excludedFromAnalysis),
        ...reasonLines(g.excludedFromAnalysisReasons),
      ],
    },
  ];

  rows.forEach((row, r) => {
    const top = y + VERTICAL_GAP;
    const lines = groups.map(row.lines);
    const height = Math.max(...lines.map(boxHeight));
    if (r === 0) {
      // From the randomised box down to a bar, then one arrow into each group's column.
      const bar = y + VERTICAL_GAP / 2;
      parts.push(line(centre, y, centre, bar));
      if (groups.length > 1) parts.push(line(columnCentre[0], bar, columnCentre[groups.length - 1], bar));
      columnCentre.forEach((cx) => parts.push(arrow(cx, bar, cx, top)));
    } else {
      columnCentre.forEach((cx) => parts.push(arrow(cx, y, cx, top)));
    }
    parts.push(stageLabel(row.stage, top + PAD + FONT_SIZE));
    lines.forEach((l, i) => parts.push(drawBox(columnX[i], top, height, l)));
    y = top + height;
  });

  const height = Math.ceil(y + MARGIN);
  const title = counts.pooled ? 'CONSORT flow diagram (all groups pooled)' : 'CONSORT flow diagram';
  return [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" role="img" font-family="sans-serif" font-size="${FONT_SIZE}" fill="#000000">`,
    `<title>${escapeXml(title)}</title>`,
    `<rect x="0" y="0" width="${width}" height="${height}" fill="#ffffff"/>`,
    ...parts,
    '</svg>',
  ].join('\n');
}
