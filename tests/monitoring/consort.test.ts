import { describe, it, expect } from 'vitest';
import {
  InvalidInputError,
  consortCounts,
  consortSvg,
  escapeXml,
  OTHER_REASONS_COMBINED,
  POOLED_LABEL,
  REASON_NOT_RECORDED,
  REASON_WITHHELD,
  type ConsortFact,
} from '@/lib/monitoring';

// Hand-built fixture with known counts (CONSORT 2010 flow diagram boxes; the scenario itself is invented):
// 40 assessed — 6 not meeting inclusion criteria, 3 declined, 1 other reason — 30 randomised, 15 per arm.
// EAM: 1 did not receive the allocated programme and was not analysed → 14 analysed.
// EPM: 2 lost to follow-up (1 lost, 1 withdrew consent), 1 discontinued the programme but stays in the
// analysis → 13 analysed.

const ARMS = [
  { code: 'EPM', label: 'Early passive motion' },
  { code: 'EAM', label: 'Early active motion' },
];

function screenedOut(screeningOutcome: ConsortFact['screeningOutcome'], exclusionReasons?: string[]): ConsortFact {
  return { screeningOutcome, exclusionReasons, arm: null, receivedAllocated: null, endStatus: null, analysed: false };
}

function randomised(arm: string, extra: Partial<ConsortFact> = {}): ConsortFact {
  return { screeningOutcome: 'eligible', arm, receivedAllocated: true, endStatus: 'completed', analysed: true, ...extra };
}

const ESCAPE_REASON = 'Splint not fitted <&> in time';

function fixture(): ConsortFact[] {
  const rows: ConsortFact[] = [
    screenedOut('not_eligible', ['Age over 70']),
    screenedOut('not_eligible', ['Age over 70']),
    screenedOut('not_eligible', ['Age over 70', 'Age over 70']),
    screenedOut('not_eligible', ['Repair older than 7 days']),
    screenedOut('not_eligible', ['Repair older than 7 days']),
    screenedOut('not_eligible', ['Age over 70', 'Fracture']),
    screenedOut('declined', ['Travel distance']),
    screenedOut('declined', ['Travel distance']),
    screenedOut('declined'),
    screenedOut('other', ['Unable to attend therapy']),
  ];
  for (let i = 0; i < 15; i++) {
    if (i === 0) {
      rows.push(
        randomised('EAM', {
          receivedAllocated: false,
          notReceivedReason: ESCAPE_REASON,
          endStatus: null,
          analysed: false,
          analysisExclusionReason: 'No week-12 measurement',
        }),
      );
    } else rows.push(randomised('EAM'));
  }
  for (let i = 0; i < 15; i++) {
    if (i === 0) rows.push(randomised('EPM', { endStatus: 'lost_to_follow_up', analysed: false, analysisExclusionReason: 'No week-12 measurement' }));
    else if (i === 1) rows.push(randomised('EPM', { endStatus: 'withdrew_consent', endReason: 'Moved abroad', analysed: false, analysisExclusionReason: 'No week-12 measurement' }));
    else if (i === 2) rows.push(randomised('EPM', { endStatus: 'discontinued_intervention', endReason: 'Tendon rupture' }));
    else rows.push(randomised('EPM'));
  }
  return rows;
}

describe('consortCounts — enrolment boxes', () => {
  const counts = consortCounts(fixture(), { arms: ARMS, pooled: false });

  it('assessed, excluded by kind, randomised', () => {
    expect(counts.assessed).toBe(40);
    expect(counts.excluded).toMatchObject({ total: 10, notMeetingCriteria: 6, declined: 3, other: 1 });
    expect(counts.randomised).toBe(30);
    expect(counts.notYetRandomised).toBe(0);
  });

  it('top exclusion reasons: each distinct reason once per person, most frequent first, the rest combined', () => {
    expect(counts.excluded.reasons).toEqual([
      { reason: 'Age over 70', n: 4 },
      { reason: 'Repair older than 7 days', n: 2 },
      { reason: 'Travel distance', n: 2 },
      { reason: 'Fracture', n: 1 },
      { reason: OTHER_REASONS_COMBINED, n: 2 },
    ]);
    const full = consortCounts(fixture(), { arms: ARMS, pooled: false, maxReasons: 10 });
    expect(full.excluded.reasons).toEqual([
      { reason: 'Age over 70', n: 4 },
      { reason: 'Repair older than 7 days', n: 2 },
      { reason: 'Travel distance', n: 2 },
      { reason: 'Fracture', n: 1 },
      { reason: REASON_NOT_RECORDED, n: 1 },
      { reason: 'Unable to attend therapy', n: 1 },
    ]);
  });
});

describe('consortCounts — by arm', () => {
  const counts = consortCounts(fixture(), { arms: ARMS, pooled: false });

  it('one group per arm in the given order', () => {
    expect(counts.pooled).toBe(false);
    expect(counts.groups.map((g) => [g.key, g.label])).toEqual([
      ['EPM', 'Early passive motion'],
      ['EAM', 'Early active motion'],
    ]);
  });

  it('EPM: 15 allocated, all received, 2 lost with reasons, 1 discontinued, 13 analysed', () => {
    const epm = counts.groups[0];
    expect(epm).toMatchObject({
      allocated: 15,
      received: 15,
      notReceived: 0,
      lostToFollowUp: 2,
      discontinued: 1,
      otherEnd: 0,
      analysed: 13,
      excludedFromAnalysis: 2,
    });
    expect(epm.lostToFollowUpReasons).toEqual([
      { reason: 'Lost to follow-up', n: 1 },
      { reason: 'Moved abroad', n: 1 },
    ]);
    expect(epm.discontinuedReasons).toEqual([{ reason: 'Tendon rupture', n: 1 }]);
    expect(epm.excludedFromAnalysisReasons).toEqual([{ reason: 'No week-12 measurement', n: 2 }]);
  });

  it('EAM: 15 allocated, 14 received, 1 did not receive (with reason), none lost, 14 analysed', () => {
    const eam = counts.groups[1];
    expect(eam).toMatchObject({
      allocated: 15,
      received: 14,
      notReceived: 1,
      lostToFollowUp: 0,
      discontinued: 0,
      analysed: 14,
      excludedFromAnalysis: 1,
    });
    expect(eam.notReceivedReasons).toEqual([{ reason: ESCAPE_REASON, n: 1 }]);
  });

  it('group counts add up to the randomised total', () => {
    expect(counts.groups.reduce((s, g) => s + g.allocated, 0)).toBe(counts.randomised);
  });
});

describe('consortCounts — pooled (blinded)', () => {
  const counts = consortCounts(fixture(), { arms: ARMS, pooled: true });

  it('one group "all" with the totals of both arms', () => {
    expect(counts.pooled).toBe(true);
    expect(counts.groups).toHaveLength(1);
    expect(counts.groups[0]).toMatchObject({
      key: 'all',
      label: POOLED_LABEL,
      allocated: 30,
      received: 29,
      notReceived: 1,
      lostToFollowUp: 2,
      discontinued: 1,
      analysed: 27,
      excludedFromAnalysis: 3,
    });
    expect(counts.assessed).toBe(40);
    expect(counts.excluded.total).toBe(10);
  });

  it('no arm code or label anywhere in the output', () => {
    const json = JSON.stringify(counts);
    for (const arm of ARMS) {
      expect(json).not.toContain(arm.code);
      expect(json.toLowerCase()).not.toContain(arm.label.toLowerCase());
    }
  });

  it('reasons that name an arm are withheld when pooled and kept by arm', () => {
    const rows = fixture();
    rows.push(randomised('EAM', { endStatus: 'discontinued_intervention', endReason: 'Could not attend EAM sessions' }));
    rows.push(randomised('EPM', { endStatus: 'discontinued_intervention', endReason: 'early passive motion splint broke' }));
    rows.push(randomised('EPM', { endStatus: 'discontinued_intervention', endReason: 'Moved to EAMES clinic' }));
    const pooled = consortCounts(rows, { arms: ARMS, pooled: true, maxReasons: 10 });
    expect(pooled.groups[0].discontinuedReasons).toEqual([
      { reason: REASON_WITHHELD, n: 2 },
      { reason: 'Moved to EAMES clinic', n: 1 },
      { reason: 'Tendon rupture', n: 1 },
    ]);
    expect(JSON.stringify(pooled)).not.toMatch(/\bEAM\b|\bEPM\b|passive motion|active motion/i);
    const byArm = consortCounts(rows, { arms: ARMS, pooled: false, maxReasons: 10 });
    expect(byArm.groups[1].discontinuedReasons).toEqual([{ reason: 'Could not attend EAM sessions', n: 1 }]);
  });

  it('the pooled diagram carries no arm either', () => {
    const svg = consortSvg(counts);
    for (const arm of ARMS) {
      expect(svg).not.toContain(arm.code);
      expect(svg.toLowerCase()).not.toContain(arm.label.toLowerCase());
    }
  });
});

describe('consortCounts — states between the boxes', () => {
  it('pending screenings and eligible people not yet randomised are assessed, neither excluded nor randomised', () => {
    const rows: ConsortFact[] = [
      screenedOut('pending'),
      screenedOut('eligible'),
      screenedOut('declined'),
      randomised('EPM', { receivedAllocated: null, endStatus: null, analysed: false }),
    ];
    const c = consortCounts(rows, { arms: ARMS, pooled: false });
    expect(c.assessed).toBe(4);
    expect(c.notYetRandomised).toBe(2);
    expect(c.excluded.total).toBe(1);
    expect(c.excluded.reasons).toEqual([{ reason: REASON_NOT_RECORDED, n: 1 }]);
    expect(c.randomised).toBe(1);
    // Intervention start not yet recorded: neither received nor not received.
    expect(c.groups[0]).toMatchObject({ allocated: 1, received: 0, notReceived: 0, analysed: 0, excludedFromAnalysis: 1 });
    expect(c.groups[1].allocated).toBe(0);
  });

  it('withdrawn from follow-up counts as lost; died and other end in their own count', () => {
    const rows: ConsortFact[] = [
      randomised('EPM', { endStatus: 'withdrawn_follow_up' }),
      randomised('EPM', { endStatus: 'died' }),
      randomised('EPM', { endStatus: 'other', endReason: 'Study site closed' }),
    ];
    const g = consortCounts(rows, { arms: ARMS, pooled: false }).groups[0];
    expect(g.lostToFollowUp).toBe(1);
    expect(g.lostToFollowUpReasons).toEqual([{ reason: 'Withdrawn from follow-up', n: 1 }]);
    expect(g.discontinued).toBe(0);
    expect(g.otherEnd).toBe(2);
    expect(g.otherEndReasons).toEqual([
      { reason: 'Died', n: 1 },
      { reason: 'Study site closed', n: 1 },
    ]);
  });
});

describe('consortCounts — invalid input', () => {
  it('rejects contradictory or unknown facts, naming the row', () => {
    const opts = { arms: ARMS, pooled: false };
    expect(() => consortCounts([{ ...screenedOut('not_eligible'), arm: 'EPM' }], opts)).toThrow(
      /Participant row 1 is randomised but its screening outcome is not_eligible/,
    );
    expect(() => consortCounts([randomised('XYZ')], opts)).toThrow(/allocation "XYZ"/);
    expect(() => consortCounts([{ ...screenedOut('declined'), endStatus: 'died' }], opts)).toThrow(/not randomised but has an end status/);
    expect(() => consortCounts([{ ...screenedOut('declined'), analysed: true }], opts)).toThrow(/marked as analysed/);
    expect(() =>
      consortCounts([screenedOut('declined'), { ...screenedOut('pending'), screeningOutcome: 'maybe' as never }], opts),
    ).toThrow(/Participant row 2 has an unknown screening outcome/);
    expect(() => consortCounts([], { arms: [], pooled: false })).toThrow(InvalidInputError);
    expect(() => consortCounts([], { arms: [ARMS[0], ARMS[0]], pooled: false })).toThrow(/listed twice/);
    expect(() => consortCounts([], { arms: ARMS, pooled: false, maxReasons: 0 })).toThrow(/maxReasons/);
  });

  it('a pooled error message does not repeat the allocation', () => {
    let message = '';
    try {
      consortCounts([randomised('XYZ')], { arms: ARMS, pooled: true });
    } catch (e) {
      expect(e).toBeInstanceOf(InvalidInputError);
      message = (e as Error).message;
    }
    expect(message).toMatch(/not one of the study’s arms/);
    expect(message).not.toContain('XYZ');
  });
});

/** A small well-formedness check: one root element, balanced tags, quoted attributes, escaped text. */
function checkWellFormedXml(xml: string): void {
  const stack: string[] = [];
  let roots = 0;
  for (const token of xml.match(/<[^>]*>|[^<]+/g) ?? []) {
    if (token.startsWith('</')) {
      const name = /^<\/([A-Za-z][\w:.-]*)\s*>$/.exec(token)?.[1];
      expect(name, `closing tag ${token}`).toBeDefined();
      expect(stack.pop(), `closing tag ${token}`).toBe(name);
    } else if (token.startsWith('<')) {
      const m = /^<([A-Za-z][\w:.-]*)((?:\s+[\w:.-]+="[^"<&]*(?:&(?:amp|lt|gt|quot|apos);[^"<&]*)*")*)\s*(\/?)>$/.exec(token);
      expect(m, `tag ${token}`).not.toBeNull();
      if (stack.length === 0) roots += 1;
      if (m![3] !== '/') stack.push(m![1]);
    } else {
      expect(stack.length > 0 || token.trim() === '', `text outside the root: ${token}`).toBe(true);
      // Every & in text starts one of the five XML entities.
      expect(token.replace(/&(amp|lt|gt|quot|apos);/g, '')).not.toMatch(/[&<>]/);
    }
  }
  expect(stack).toEqual([]);
  expect(roots).toBe(1);
}

describe('consortSvg', () => {
  const byArm = consortSvg(consortCounts(fixture(), { arms: ARMS, pooled: false }));

  it('is a well-formed SVG with width, height and a title, and no scripts or external resources', () => {
    expect(byArm.startsWith('<svg ')).toBe(true);
    expect(byArm.trimEnd().endsWith('</svg>')).toBe(true);
    checkWellFormedXml(byArm);
    expect(byArm).toMatch(/^<svg [^>]*\bwidth="\d+"[^>]*\bheight="\d+"/);
    expect(byArm).toMatch(/<title>CONSORT flow diagram<\/title>/);
    expect(byArm).not.toMatch(/<script|@import|url\(|href=|<image|<foreignObject|<style/i);
  });

  it('shows every box count as text', () => {
    const texts = [
      'Assessed for eligibility (n = 40)',
      'Excluded (n = 10)',
      'Not meeting inclusion criteria (n = 6)',
      'Declined to participate (n = 3)',
      'Other reasons (n = 1)',
      'Randomised (n = 30)',
      'Allocated to Early passive motion (n = 15)',
      'Allocated to Early active motion (n = 15)',
      'Received allocated intervention (n = 15)',
      'Received allocated intervention (n = 14)',
      'Did not receive allocated intervention (n = 1)',
      'Lost to follow-up (n = 2)',
      'Discontinued intervention (n = 1)',
      'Analysed (n = 13)',
      'Analysed (n = 14)',
      'Excluded from analysis (n = 2)',
      'Excluded from analysis (n = 1)',
      '– Age over 70 (n = 4)',
      '– Tendon rupture (n = 1)',
    ];
    for (const t of texts) expect(byArm, t).toContain(`>${escapeXml(t)}<`);
  });

  it('escapes reason text', () => {
    expect(byArm).toContain('Splint not fitted &lt;&amp;&gt; in time');
    expect(byArm).not.toContain('<&>');
    expect(escapeXml(`a<b & "c" 'd'>`)).toBe('a&lt;b &amp; &quot;c&quot; &apos;d&apos;&gt;');
  });

  it('draws thin dark outlines on white boxes, without colour coding', () => {
    const strokes = new Set([...byArm.matchAll(/stroke="([^"]+)"/g)].map((m) => m[1]));
    const fills = new Set([...byArm.matchAll(/fill="([^"]+)"/g)].map((m) => m[1]));
    expect([...strokes]).toEqual(['#222222']);
    expect([...fills].sort()).toEqual(['#000000', '#222222', '#ffffff']);
    expect(byArm).not.toMatch(/stroke-width="(?!1")/);
  });

  it('wraps a long reason inside its box and keeps the count together', () => {
    const rows = fixture();
    const long = 'Patient could not come to any of the planned therapy sessions because of a long-term illness';
    rows.push(randomised('EPM', { receivedAllocated: false, notReceivedReason: long }));
    const svg = consortSvg(consortCounts(rows, { arms: ARMS, pooled: false }));
    checkWellFormedXml(svg);
    // Measured as displayed: entities count as the one character they stand for.
    const lines = [...svg.matchAll(/<text [^>]*>([^<]*)<\/text>/g)].map((m) => m[1].replace(/&(amp|lt|gt|quot|apos);/g, '_'));
    expect(lines.every((l) => l.length <= 46)).toBe(true);
    expect(lines.some((l) => l.endsWith('illness (n = 1)') || l === '(n = 1)')).toBe(true);
    expect(lines.filter((l) => /\(n =$|^= \d/.test(l))).toEqual([]);
  });

  it('titles the pooled diagram as pooled and labels its single group', () => {
    const pooled = consortSvg(consortCounts(fixture(), { arms: ARMS, pooled: true }));
    checkWellFormedXml(pooled);
    expect(pooled).toContain('<title>CONSORT flow diagram (all groups pooled)</title>');
    expect(pooled).toContain('>All randomised (n = 30)<');
  });

  it('rejects counts without groups', () => {
    expect(() => consortSvg({ ...consortCounts([], { arms: ARMS, pooled: true }), groups: [] })).toThrow(InvalidInputError);
  });
});
