// Saving CRF records: one audit row per changed item (arrays included), reasons after submission,
// optimistic concurrency, rollback when the audit insert fails, versioned definitions, and the HTTP edges.
import { describe, it, expect, beforeAll } from 'vitest';
import { CrfRecord, FormDefinition, Participant, StudyForm, User, sequelize } from '@/models';
import { compileDefinition, publishDefinition, pinForm, getDefinition } from '@/lib/crf/definitions';
import { saveRecord, readRecord } from '@/lib/crf/records';
import { auditFaults } from '@/lib/audit';
import { recordScreening } from '@/lib/screening';
import { AppError } from '@/lib/errors';
import { demoStudy, siteOf, uniq } from '../support/factories';
import { DEMO, signedIn } from '../support/http';
import { count, rows } from '../support/db';
import type { Study, Site } from '@/models';

const KEY = `t_grid_${Date.now() % 1_000_000}`;
const schemaV1 = {
  type: 'object',
  title: 'Test grid form',
  'x-form-key': KEY,
  'x-form-version': 1,
  additionalProperties: false,
  required: ['VISDAT', 'weight_kg'],
  properties: {
    VISDAT: { type: 'string', format: 'date', title: 'Visit date' },
    weight_kg: { type: 'number', minimum: 0, maximum: 300, title: 'Weight', 'x-units': 'kg' },
    fingers: {
      type: 'array',
      items: {
        type: 'object',
        additionalProperties: false,
        properties: {
          finger: { type: 'string', enum: ['index', 'middle', 'ring', 'little'] },
          pip_flexion: { type: 'number', minimum: 0, maximum: 120, 'x-units': 'degrees' },
          pip_ext_deficit: { type: 'number', minimum: -60, maximum: 120, 'x-units': 'degrees' },
        },
      },
    },
    notes: { type: 'string', maxLength: 200 },
  },
};
const rulesV1 = {
  rules: [
    { id: 'deficit-le-flexion', level: 'hard', message: 'An extension deficit cannot exceed the flexion of the same joint.', assert: { op: 'lte', args: [{ item: '/fingers/*/pip_ext_deficit' }, { item: '/fingers/*/pip_flexion' }] } },
    { id: 'weight-plausible', level: 'soft', message: 'Weight outside 30–200 kg: please check.', assert: { op: 'between', args: [{ item: '/weight_kg' }, { value: 30 }, { value: 200 }] } },
    { id: 'visit-not-future', level: 'hard', message: 'The visit date cannot be in the future.', assert: { op: 'lte', args: [{ item: '/VISDAT' }, { today: true }] } },
  ],
};
const def = (version: number, schema: object, rules: object = rulesV1) =>
  compileDefinition({ key: KEY, version, title: 'Test grid form', access: 'all', schema: schema as Record<string, unknown>, ui: {}, rules: rules as never });

let study: Study;
let hhc: Site;
let coordinatorId: number;
const TODAY = '2026-12-02';

async function newParticipant() {
  return recordScreening({ studyId: study.id, siteId: hhc.id, screeningNumber: uniq('S'), screeningDate: '2026-11-01', age: 40, sex: 'F', actor: { userId: coordinatorId, role: 'coordinator' } });
}
const actor = () => ({ userId: coordinatorId, roles: ['coordinator' as const] });
const save = (participantId: number, data: Record<string, unknown>, intent: 'draft' | 'submit', baseVersion: number | null, reason?: { code: 'transcription_error' | 'late_information'; text?: string }) =>
  saveRecord({ study, siteId: hhc.id, participantId, formKey: KEY, data, intent, baseVersion, reason, actor: actor(), today: TODAY });
const auditOf = (recordId: number) =>
  rows<{ action: string; item_path: string | null; old_value: string | null; new_value: string | null; reason: string | null; actor_role: string; actor_user_id: number; form_version: number; at: string }>(
    sequelize,
    "SELECT action, item_path, old_value, new_value, reason, actor_role, actor_user_id, form_version, DATE_FORMAT(at, '%Y-%m-%d %H:%i:%s.%f') AS at FROM audit_events WHERE entity_type = 'crf_record' AND entity_id = ? ORDER BY id",
    [String(recordId)],
  );

const base = { VISDAT: '2026-11-30', weight_kg: 72, fingers: [{ finger: 'index', pip_flexion: 90, pip_ext_deficit: 5 }, { finger: 'middle', pip_flexion: 95, pip_ext_deficit: 0 }] };

beforeAll(async () => {
  study = await demoStudy();
  hhc = await siteOf(study.id, 'HHC');
  coordinatorId = (await User.findOne({ where: { email: DEMO.coordinatorHHC } }))!.id;
  expect(await publishDefinition(def(1, schemaV1))).toBe('published');
  await pinForm(study.id, KEY, 1, { userId: null, role: 'system' });
});

describe('saving a record', () => {
  it('writes one audit row per entered item on creation, with actor, role, server time and form version', async () => {
    const p = await newParticipant();
    const rec = await save(p.id, base, 'draft', null);
    expect(rec.status).toBe('draft');
    const a = await auditOf(rec.id);
    expect(a.map((r) => r.item_path)).toEqual([null, '/VISDAT', '/fingers/0/finger', '/fingers/0/pip_ext_deficit', '/fingers/0/pip_flexion', '/fingers/1/finger', '/fingers/1/pip_ext_deficit', '/fingers/1/pip_flexion', '/weight_kg', null]);
    expect(a[0].action).toBe('create');
    expect(a.at(-1)!.action).toBe('status');
    for (const r of a) {
      expect(r.actor_user_id).toBe(coordinatorId);
      expect(r.actor_role).toBe('coordinator');
      expect(Number(r.form_version)).toBe(1);
      expect(r.at).toMatch(/\.\d{6}$/);
    }
  });

  it('a change inside an array gives exactly one row with old and new value and the reason', async () => {
    const p = await newParticipant();
    const r1 = await save(p.id, base, 'submit', null);
    const before = (await auditOf(r1.id)).length;
    const changed = structuredClone(base);
    changed.fingers[1].pip_flexion = 80;
    const r2 = await save(p.id, changed, 'submit', r1.lockVersion, { code: 'transcription_error', text: 'read from the wrong column' });
    const a = (await auditOf(r2.id)).slice(before);
    expect(a).toHaveLength(1);
    expect(a[0]).toMatchObject({ action: 'item', item_path: '/fingers/1/pip_flexion', old_value: '95', new_value: '80', reason: 'Transcription error: read from the wrong column' });
  });

  it('saving unchanged values writes nothing', async () => {
    const p = await newParticipant();
    const r1 = await save(p.id, base, 'draft', null);
    const n = await count(sequelize, 'audit_events');
    const r2 = await save(p.id, base, 'draft', r1.lockVersion);
    expect(r2.lockVersion).toBe(r1.lockVersion);
    expect(await count(sequelize, 'audit_events')).toBe(n);
  });

  it('after submission, a change without a reason is refused and nothing is written', async () => {
    const p = await newParticipant();
    const r1 = await save(p.id, base, 'submit', null);
    const n = await count(sequelize, 'audit_events');
    await expect(save(p.id, { ...base, weight_kg: 73 }, 'submit', r1.lockVersion)).rejects.toMatchObject({ code: 'validation_failed', fields: { reason: expect.any(String) } });
    expect(await count(sequelize, 'audit_events')).toBe(n);
    const rec = await CrfRecord.findByPk(r1.id);
    expect(rec!.data.weight_kg).toBe(72);
    expect(rec!.lockVersion).toBe(r1.lockVersion);
  });

  it('clearing a value is a change with a reason, never a delete', async () => {
    const p = await newParticipant();
    const r1 = await save(p.id, { ...base, notes: 'swelling' }, 'submit', null);
    const before = (await auditOf(r1.id)).length;
    const r2 = await save(p.id, base, 'submit', r1.lockVersion, { code: 'late_information' });
    const a = (await auditOf(r2.id)).slice(before);
    expect(a).toEqual([expect.objectContaining({ item_path: '/notes', old_value: '"swelling"', new_value: null, reason: 'Late information' })]);
  });

  it('two clients edit the same record: the second gets 409 with the current values, the first save survives', async () => {
    const p = await newParticipant();
    const r1 = await save(p.id, base, 'draft', null);
    const first = await save(p.id, { ...base, weight_kg: 70 }, 'draft', r1.lockVersion);
    let err: AppError | null = null;
    try {
      await save(p.id, { ...base, weight_kg: 99 }, 'draft', r1.lockVersion);
    } catch (e) {
      err = e as AppError;
    }
    expect(err?.code).toBe('stale_version');
    expect(err?.status).toBe(409);
    expect((err?.details?.current as { data: { weight_kg: number } }).data.weight_kg).toBe(70);
    expect((await CrfRecord.findByPk(first.id))!.data.weight_kg).toBe(70);
  });

  it('a failure injected during the audit insert rolls back the record change', async () => {
    const p = await newParticipant();
    const r1 = await save(p.id, base, 'draft', null);
    const n = await count(sequelize, 'audit_events');
    auditFaults.failNext = true;
    await expect(save(p.id, { ...base, weight_kg: 55 }, 'draft', r1.lockVersion)).rejects.toThrow('injected audit failure');
    const rec = await CrfRecord.findByPk(r1.id);
    expect(rec!.data.weight_kg).toBe(72);
    expect(rec!.lockVersion).toBe(r1.lockVersion);
    expect(await count(sequelize, 'audit_events')).toBe(n);
    // A new record whose audit fails is not created either.
    const q = await newParticipant();
    auditFaults.failNext = true;
    await expect(save(q.id, base, 'draft', null)).rejects.toThrow('injected audit failure');
    expect(await CrfRecord.count({ where: { participantId: q.id } })).toBe(0);
  });

  it('a draft may leave required items empty; a submission may not', async () => {
    const p = await newParticipant();
    const d = await save(p.id, { weight_kg: 60 }, 'draft', null);
    expect(d.status).toBe('draft');
    await expect(save(p.id, { weight_kg: 60 }, 'submit', d.lockVersion)).rejects.toMatchObject({ code: 'validation_failed', fields: { '/VISDAT': expect.stringMatching(/required/) } });
  });

  it('ranges and types from the schema block a save with per-item messages', async () => {
    const p = await newParticipant();
    await expect(save(p.id, { ...base, weight_kg: 400 }, 'draft', null)).rejects.toMatchObject({ fields: { '/weight_kg': 'Must be at most 300.' } });
    await expect(save(p.id, { ...base, fingers: [{ finger: 'thumb' }] }, 'draft', null)).rejects.toMatchObject({ fields: { '/fingers/0/finger': expect.any(String) } });
    await expect(save(p.id, { ...base, colour: 'red' }, 'draft', null)).rejects.toMatchObject({ fields: { '/colour': 'This item is not part of the form.' } });
  });

  it('a hard cross-field rule blocks submission and names the items; a soft rule saves and marks for review', async () => {
    const p = await newParticipant();
    const bad = structuredClone(base);
    bad.fingers[0].pip_ext_deficit = 100;
    await expect(save(p.id, bad, 'submit', null)).rejects.toMatchObject({ code: 'validation_failed', fields: { '/fingers/0/pip_ext_deficit': expect.stringMatching(/cannot exceed/) } });
    await expect(save(p.id, { ...base, VISDAT: '2027-01-01' }, 'submit', null)).rejects.toMatchObject({ fields: { '/VISDAT': expect.stringMatching(/future/) } });
    const soft = await save(p.id, { ...base, weight_kg: 250 }, 'submit', null);
    expect(soft.status).toBe('submitted');
    expect(soft.review).toEqual([expect.objectContaining({ ruleId: 'weight-plausible', level: 'soft', items: ['/weight_kg'] })]);
  });
});

describe('versioned definitions', () => {
  it('a changed file under a published version is refused', async () => {
    const changed = def(1, { ...schemaV1, title: 'Changed without a new version' });
    await expect(publishDefinition(changed)).rejects.toThrow(/already published with different content/);
  });

  it('a definition that does not compile in strict mode is refused, naming the file and the problem', () => {
    expect(() => compileDefinition({ key: 'broken', version: 1, title: 'Broken', access: 'all', schema: { type: 'object', properties: { a: { type: 'string', colour: 'red' } } }, ui: {}, rules: { rules: [] } as never })).toThrow(
      /forms\/broken\/schema\.json does not compile in strict mode: .*colour/,
    );
  });

  it('a record entered on version 1 still opens and displays with version 1 after version 2 is published', async () => {
    const p = await newParticipant();
    const r1 = await save(p.id, base, 'submit', null);
    const schemaV2 = structuredClone(schemaV1) as typeof schemaV1 & { properties: Record<string, unknown> };
    schemaV2['x-form-version'] = 2;
    schemaV2.properties.grip_kg = { type: 'number', minimum: 0, maximum: 90, 'x-units': 'kg' };
    schemaV2.required = ['VISDAT', 'weight_kg', 'grip_kg'];
    await publishDefinition(def(2, schemaV2));
    await pinForm(study.id, KEY, 2, { userId: null, role: 'system' });
    const old = await readRecord({ study, siteId: hhc.id, participantId: p.id, formKey: KEY, roles: ['coordinator'] });
    expect(old.record!.formVersion).toBe(1);
    expect(old.definition.version).toBe(1);
    expect(Object.keys(old.definition.schema.properties as object)).not.toContain('grip_kg');
    expect(old.record!.data).toEqual(base);
    // Changing it still validates against version 1 (grip_kg is not required there).
    const r2 = await save(p.id, { ...base, weight_kg: 71 }, 'submit', r1.lockVersion, { code: 'transcription_error' });
    expect(r2.formVersion).toBe(1);
    // A new record uses version 2.
    const q = await newParticipant();
    const fresh = await readRecord({ study, siteId: hhc.id, participantId: q.id, formKey: KEY, roles: ['coordinator'] });
    expect(fresh.definition.version).toBe(2);
    await expect(save(q.id, base, 'submit', null)).rejects.toMatchObject({ fields: { '/grip_kg': expect.any(String) } });
    expect((await getDefinition(KEY, 1)).hash).toBe((await FormDefinition.findOne({ where: { formKey: KEY, version: 1 } }))!.contentHash);
    await pinForm(study.id, KEY, 1, { userId: null, role: 'system' });
    expect((await StudyForm.findOne({ where: { studyId: study.id, formKey: KEY } }))!.version).toBe(1);
  });
});

describe('CRF routes over HTTP', () => {
  let participantId: number;
  const url = () => `/api/studies/TEMPO-FT/sites/HHC/participants/${participantId}/forms/${KEY}`;
  beforeAll(async () => {
    participantId = (await newParticipant()).id;
  });

  it('saves, reads back and answers 409 to a stale version', async () => {
    const c = await signedIn(DEMO.coordinatorHHC);
    const r = await c.json('PUT', url(), { data: base, intent: 'draft', baseVersion: null });
    expect(r.status).toBe(200);
    const g = await c.get(url());
    expect(g.body.record.data).toEqual(base);
    expect(g.body.definition.key).toBe(KEY);
    const stale = await c.json('PUT', url(), { data: { ...base, weight_kg: 1 }, intent: 'draft', baseVersion: null });
    expect(stale.status).toBe(409);
    expect(stale.body.error.current.data.weight_kg).toBe(72);
  });

  const bad: { name: string; body: unknown; status: number; code: string }[] = [
    { name: 'malformed JSON', body: '{"data": {', status: 400, code: 'malformed_json' },
    { name: 'unknown top-level property', body: { data: base, intent: 'draft', baseVersion: null, hack: 1 }, status: 400, code: 'validation_failed' },
    { name: 'unknown item', body: { data: { ...base, hack: 1 }, intent: 'draft', baseVersion: 1 }, status: 400, code: 'validation_failed' },
    { name: 'wrong item type', body: { data: { ...base, weight_kg: 'heavy' }, intent: 'draft', baseVersion: 1 }, status: 400, code: 'validation_failed' },
    { name: 'wrong intent', body: { data: base, intent: 'publish', baseVersion: 1 }, status: 400, code: 'validation_failed' },
    { name: 'payload over 256 kB', body: JSON.stringify({ data: { ...base, notes: 'x'.repeat(270 * 1024) }, intent: 'draft', baseVersion: 1 }), status: 413, code: 'payload_too_large' },
  ];
  for (const b of bad) {
    it(`${b.name} → ${b.status}, nothing written`, async () => {
      const c = await signedIn(DEMO.coordinatorHHC);
      const n = await count(sequelize, 'audit_events');
      const r = await c.json('PUT', url(), b.body);
      expect(r.status).toBe(b.status);
      expect(r.body.error.code).toBe(b.code);
      expect(await count(sequelize, 'audit_events')).toBe(n);
    });
  }

  it('a coordinator of another site gets 403, an unknown participant 404', async () => {
    const other = await signedIn(DEMO.coordinatorMLB);
    expect((await other.json('PUT', url(), { data: base, intent: 'draft', baseVersion: 1 })).status).toBe(403);
    expect((await other.get(url())).status).toBe(403);
    const c = await signedIn(DEMO.coordinatorHHC);
    expect((await c.get(`/api/studies/TEMPO-FT/sites/HHC/participants/99999999/forms/${KEY}`)).status).toBe(404);
    const mlb = await Participant.create({ studyId: study.id, siteId: (await siteOf(study.id, 'MLB')).id, screeningNumber: uniq('M'), subjectCode: null, createdBy: null });
    // An HHC coordinator asking for an MLB participant through the HHC URL finds nothing.
    expect((await c.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${mlb.id}/forms/${KEY}`)).status).toBe(404);
  });

  it('a record entered in error is voided with a reason, never deleted, and cannot be changed afterwards', async () => {
    const c = await signedIn(DEMO.coordinatorHHC);
    const q = (await newParticipant()).id;
    const u = `/api/studies/TEMPO-FT/sites/HHC/participants/${q}/forms/${KEY}`;
    const r = await c.json('PUT', u, { data: base, intent: 'draft', baseVersion: null });
    expect((await c.post(`${u}/void`, { reason: 'x', baseVersion: r.body.lockVersion })).status).toBe(400);
    const v = await c.post(`${u}/void`, { reason: 'entered for the wrong participant', baseVersion: r.body.lockVersion });
    expect(v.status).toBe(200);
    expect(v.body.status).toBe('voided');
    expect(await CrfRecord.count({ where: { id: r.body.id } })).toBe(1);
    const again = await c.json('PUT', u, { data: base, intent: 'draft', baseVersion: v.body.lockVersion });
    expect(again.status).toBe(409);
    const a = await rows<{ action: string; new_value: string; reason: string }>(sequelize, "SELECT action, new_value, reason FROM audit_events WHERE entity_type = 'crf_record' AND entity_id = ? ORDER BY id DESC LIMIT 1", [String(r.body.id)]);
    expect(a[0]).toEqual({ action: 'status', new_value: '"voided"', reason: 'entered for the wrong participant' });
  });

  it('the participant audit lists the changes with filters and paging', async () => {
    const c = await signedIn(DEMO.coordinatorHHC);
    const r = await c.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${participantId}/audit?form=${KEY}&pageSize=3`);
    expect(r.status).toBe(200);
    expect(r.body.rows).toHaveLength(3);
    expect(r.body.total).toBeGreaterThan(3);
    const item = await c.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${participantId}/audit?item=${encodeURIComponent('/weight_kg')}`);
    expect(item.body.rows.map((x: { itemPath: string }) => x.itemPath)).toEqual(['/weight_kg']);
    expect((await c.get(`/api/studies/TEMPO-FT/sites/HHC/participants/${participantId}/audit?from=2020-13-45`)).status).toBe(400);
  });
});
