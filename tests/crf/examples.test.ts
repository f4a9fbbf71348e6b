// Every form in forms/ compiles in AJV strict mode, and its example documents go through the server's own
// validator (schema + cross-field rules): valid ones pass as submissions, invalid ones are refused for their reason.
import { describe, it, expect } from 'vitest';
import { readdirSync, readFileSync, existsSync } from 'node:fs';
import path from 'node:path';
import { readAllForms } from '@/lib/crf/definitions';
import { checkDocument } from '@/lib/crf/records';
import { derive } from '@/lib/crf/derive';

const forms = readAllForms();
const TODAY = '2026-12-02';

describe('forms/ through the server validator', () => {
  it('loads all nine TEMPO-FT forms', () => {
    expect(forms.map((f) => f.key).sort()).toEqual(
      ['adverse_event', 'baseline', 'consent', 'eligibility', 'end_of_participation', 'follow_up', 'operation', 'protocol_deviation', 'therapy_session'],
    );
  });

  for (const f of forms) {
    describe(f.key, () => {
      const dir = path.join('forms', f.key, 'examples');
      const files = existsSync(dir) ? readdirSync(dir).filter((x) => x.endsWith('.json')).sort() : [];
      const valid = files.filter((x) => x.startsWith('valid-'));
      const invalid = files.filter((x) => x.startsWith('invalid-'));

      it('has at least one valid and three invalid examples', () => {
        expect(valid.length).toBeGreaterThanOrEqual(1);
        expect(invalid.length).toBeGreaterThanOrEqual(3);
      });

      for (const v of valid) {
        it(`accepts ${v} as a submission`, () => {
          const doc = JSON.parse(readFileSync(path.join(dir, v), 'utf8'));
          const entered = Object.fromEntries(Object.entries(doc).filter(([k]) => !f.derivedKeys.includes(k)));
          const r = checkDocument(f, { ...entered, ...derive(f, entered) }, 'submit', TODAY);
          expect(r.fields).toEqual({});
          expect(r.violations.filter((x) => x.level === 'hard')).toEqual([]);
        });
      }

      for (const v of invalid) {
        it(`refuses ${v}`, () => {
          const ex = JSON.parse(readFileSync(path.join(dir, v), 'utf8')) as { why: string; expect: string; doc: Record<string, unknown> };
          const r = checkDocument(f, ex.doc, 'submit', TODAY);
          if (ex.expect === 'schema') {
            expect(Object.keys(r.fields).length, ex.why).toBeGreaterThan(0);
          } else {
            const id = ex.expect.replace(/^rule:/, '');
            expect(r.violations.map((x) => x.ruleId), ex.why).toContain(id);
          }
        });
      }
    });
  }
});
