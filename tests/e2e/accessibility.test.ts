// Accessibility: axe-core on every page each demo role can reach (per the authorisation matrix), with real ids of a
// randomised participant, plus the pages seen before signing in. Fails on any serious or critical violation; prints a
// summary and saves a screenshot of each page to test-output/.
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import path from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { ROLES, type Role } from '@/lib/roles';
import { BASE } from '../support/http';
import { launch, screenshot, signInPage } from '../support/browser';
import { DEMO_EMAIL, fixtureIds, type Ids } from '../authz/fixtures';
import { PAGES, expectedPage } from '../authz/matrix';

const AXE = path.resolve('node_modules/axe-core/axe.min.js');

type Violation = { id: string; impact: string | null; help: string; nodes: { target: string[]; failureSummary?: string }[] };

/** Every page an actor reaches, with a few form variants (the assessor's follow-up, the therapist's session log). */
function pagesFor(role: Role | 'anonymous', ids: Ids): string[] {
  const urls = PAGES.filter((p) => expectedPage(p, role) === 'ok').map((p) => p.url(ids));
  const PP = `/studies/${ids.study}/sites/${ids.site}/participants/${ids.participant}/forms`;
  if (role === 'assessor') urls.push(`${PP}/follow_up?visit=week6`);
  if (role === 'therapist') urls.push(`${PP}/therapy_session?visit=week2`);
  if (role === 'coordinator') urls.push(`${PP}/adverse_event`);
  return urls;
}

async function audit(page: Page, url: string): Promise<Violation[]> {
  await page.goto(`${BASE}${url}`, { waitUntil: 'networkidle' });
  // The CSP allows inline scripts ('unsafe-inline'), so axe is added as a script tag with its own source.
  await page.addScriptTag({ path: AXE });
  const res = await page.evaluate(async () => {
    const axe = (window as unknown as { axe: { run: (ctx: unknown, opts: unknown) => Promise<{ violations: unknown[] }> } }).axe;
    return axe.run(document, { resultTypes: ['violations'], runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'best-practice'] } });
  });
  return res.violations as Violation[];
}

describe('accessibility (axe-core)', () => {
  let browser: Browser;
  let ids: Ids;
  const found: { who: string; url: string; v: Violation }[] = [];
  let pagesChecked = 0;

  beforeAll(async () => {
    ids = await fixtureIds();
    browser = await launch();
  });
  afterAll(async () => {
    await browser?.close();
  });

  const check = async (page: Page, who: string, url: string) => {
    const vs = await audit(page, url);
    pagesChecked++;
    await screenshot(page, `a11y-${who}-${url.replace(/^\//, '').replace(/[^A-Za-z0-9]+/g, '-') || 'home'}`);
    for (const v of vs) found.push({ who, url, v });
  };

  it('pages before sign-in', async () => {
    const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
    for (const url of pagesFor('anonymous', ids)) await check(page, 'anonymous', url);
    await page.close();
  });

  for (const role of ROLES) {
    it(`every page the ${role} reaches`, async () => {
      const page = await signInPage(browser, DEMO_EMAIL[role]);
      for (const url of pagesFor(role, ids)) await check(page, role, url);
      await page.close();
    });
  }

  it('no serious or critical violation anywhere', () => {
    const bad = found.filter((f) => f.v.impact === 'serious' || f.v.impact === 'critical');
    const byRule = new Map<string, { impact: string | null; help: string; pages: Set<string>; example: string }>();
    for (const f of found) {
      const r = byRule.get(f.v.id) ?? { impact: f.v.impact, help: f.v.help, pages: new Set<string>(), example: `${f.v.nodes[0]?.target.join(' ')} — ${f.v.nodes[0]?.failureSummary?.split('\n').slice(0, 2).join(' ') ?? ''}` };
      r.pages.add(`${f.who} ${f.url}`);
      byRule.set(f.v.id, r);
    }
    console.log(`accessibility: ${pagesChecked} pages checked, ${found.length} violations (${bad.length} serious or critical)`);
    for (const [id, r] of byRule) console.log(`  [${r.impact}] ${id}: ${r.help} — ${r.pages.size} page(s), e.g. ${[...r.pages][0]}\n      ${r.example}`);
    expect(pagesChecked).toBeGreaterThan(40);
    expect(bad.map((f) => `[${f.v.impact}] ${f.v.id} on ${f.url} as ${f.who}: ${f.v.nodes.map((n) => n.target.join(' ')).slice(0, 3).join(', ')}`)).toEqual([]);
  });
});
