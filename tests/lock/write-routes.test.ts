// A hard lock refuses every write. The route files under app/api are discovered, their state-changing methods listed,
// and each one is called on a hard-locked study of this file's own, with real ids and a user whose role would
// otherwise be allowed: every answer is 423 `locked`, and nothing is written. A write route added without a row in
// the table below fails this test. The domain functions refuse too when called directly (defence in depth).
import { describe, it, expect, beforeAll } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { CrfRecord, Membership, Participant, Query, type Site, type Study } from '@/models';
import { openQuery, answerQuery } from '@/lib/monitoring/queries';
import { saveRecord } from '@/lib/crf/records';
import { recordScreening } from '@/lib/screening';
import { storeConsentUpload } from '@/lib/uploads';
import { emergencyUnblind } from '@/lib/allocation';
import { addMembership } from '@/lib/users/admin';
import { setLock, lockState } from '@/lib/lock';
import { TEST_PASSWORD, uniq } from '../support/factories';
import { count, privDb } from '../support/db';
import { example, PDF, readyParticipant } from '../support/ready';
import { client, lockStudy, randomised } from './helpers';
import type { Client } from '../support/http';

const WRITE = ['POST', 'PUT', 'PATCH', 'DELETE'];

/** Every `app/api/**\/route.ts` with the write methods it exports, as "METHOD /api/…" keys. */
function discoverWriteRoutes(): string[] {
  const root = path.resolve('app/api');
  const out: string[] = [];
  const walk = (dir: string) => {
    for (const e of readdirSync(dir, { withFileTypes: true })) {
      const p = path.join(dir, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.name === 'route.ts') {
        const src = readFileSync(p, 'utf8');
        const methods = new Set<string>();
        for (const m of src.matchAll(/export\s+(?:const|async\s+function|function)\s+(GET|HEAD|OPTIONS|POST|PUT|PATCH|DELETE)\b/g)) methods.add(m[1]);
        for (const m of src.matchAll(/export\s*\{([^}]*)\}/g)) for (const n of m[1].matchAll(/\bas\s+(GET|HEAD|OPTIONS|POST|PUT|PATCH|DELETE)\b/g)) methods.add(n[1]);
        const route = `/api/${path.relative(root, path.dirname(p)).split(path.sep).join('/')}`;
        for (const m of methods) if (WRITE.includes(m)) out.push(`${m} ${route}`);
      }
    }
  };
  walk(root);
  return out.sort();
}

type Ids = { study: string; participant: number; unrandomised: number; record: number; recordVersion: number; query: number; membership: number; userId: number };
type Who = 'coordinator' | 'monitor' | 'investigator' | 'dm1' | 'admin';
type Row = { as: Who; url: (i: Ids) => string; body?: (i: Ids) => unknown; raw?: { type: string; bytes: Buffer } } | { exempt: string };

const S = (i: Ids) => `/api/studies/${i.study}`;
const P = (i: Ids, pid = i.participant) => `${S(i)}/sites/AAA/participants/${pid}`;

/** The write routes, each with who would be allowed to call it and a body that would be accepted. */
const TABLE: Record<string, Row> = {
  'POST /api/auth/[...nextauth]': { exempt: 'sign-in and sign-out; no study data' },
  'POST /api/invitations/accept': { exempt: 'public and not study-scoped: the invited person sets their own password' },
  'POST /api/studies/[study]/sample-size': { exempt: 'a planning calculation: it reads and writes no study data, so it works under any lock' },
  'POST /api/studies/[study]/snapshots': { exempt: 'takes the snapshot again; it works only under the hard lock (tests/exports)' },
  'POST /api/studies/[study]/lock': { exempt: 'the lock routes stay usable under any lock (checked below)' },
  'POST /api/studies/[study]/lock/unlock-requests': { exempt: 'the lock routes stay usable under any lock (checked below)' },
  'POST /api/studies/[study]/lock/unlock-requests/[request]/approve': { exempt: 'the lock routes stay usable under any lock (checked below)' },
  // The lock answer comes before the handler looks the SAE up, so an id that does not exist still shows the refusal.
  'POST /api/studies/[study]/safety/[sae]/follow-up': { as: 'investigator', url: (i) => `${S(i)}/safety/1/follow-up`, body: () => ({ note: 'Reported to the sponsor.' }) },
  'POST /api/studies/[study]/invitations': { as: 'admin', url: (i) => `${S(i)}/invitations`, body: () => ({ email: `${uniq('inv')}@test.example`, name: 'New Monitor', role: 'monitor', site: null }) },
  'POST /api/studies/[study]/memberships': { as: 'admin', url: (i) => `${S(i)}/memberships`, body: (i) => ({ userId: i.userId, role: 'monitor', site: null }) },
  'DELETE /api/studies/[study]/memberships/[membershipId]': { as: 'admin', url: (i) => `${S(i)}/memberships/${i.membership}`, body: () => ({ reason: 'no longer on the team' }) },
  'POST /api/studies/[study]/randomisation/activate': { as: 'dm1', url: (i) => `${S(i)}/randomisation/activate`, body: () => ({}) },
  'POST /api/studies/[study]/sites': { as: 'admin', url: (i) => `${S(i)}/sites`, body: () => ({ code: 'DDD', name: 'Dogwood Clinic', timeZone: 'UTC', recruitmentTarget: 5 }) },
  'PATCH /api/studies/[study]/sites/[site]': { as: 'admin', url: (i) => `${S(i)}/sites/AAA`, body: () => ({ recruitmentTarget: 12, reason: 'target raised' }) },
  'PUT /api/studies/[study]/sites/[site]/participants/[participant]/forms/[form]': {
    as: 'coordinator', url: (i) => `${P(i)}/forms/baseline`,
    body: (i) => ({ data: { ...example('baseline'), smoking: 'never' }, intent: 'submit', baseVersion: i.recordVersion, reason: { code: 'late_information' } }),
  },
  'POST /api/studies/[study]/sites/[site]/participants/[participant]/forms/[form]/void': { as: 'coordinator', url: (i) => `${P(i)}/forms/baseline/void`, body: (i) => ({ reason: 'entered for the wrong person', baseVersion: i.recordVersion }) },
  'POST /api/studies/[study]/sites/[site]/participants/[participant]/randomise': { as: 'coordinator', url: (i) => `${P(i, i.unrandomised)}/randomise`, body: () => ({ confirm: true }) },
  'POST /api/studies/[study]/sites/[site]/participants/[participant]/signatures': { as: 'investigator', url: (i) => `${P(i)}/signatures`, body: () => ({ password: TEST_PASSWORD, confirm: true }) },
  'POST /api/studies/[study]/sites/[site]/participants/[participant]/unblind': { as: 'investigator', url: (i) => `${P(i)}/unblind`, body: () => ({ reason: 'suspected rupture needs the allocation for surgery planning' }) },
  'POST /api/studies/[study]/sites/[site]/participants/[participant]/uploads': { as: 'coordinator', url: (i) => `${P(i)}/uploads`, raw: { type: 'application/pdf', bytes: PDF } },
  'POST /api/studies/[study]/sites/[site]/participants/[participant]/verify': { as: 'monitor', url: (i) => `${P(i)}/verify`, body: (i) => ({ recordId: i.record, itemPath: '' }) },
  'POST /api/studies/[study]/sites/[site]/queries': { as: 'monitor', url: (i) => `${S(i)}/sites/AAA/queries`, body: (i) => ({ recordId: i.record, itemPath: '/AGE', message: 'Please check the age.' }) },
  'POST /api/studies/[study]/sites/[site]/queries/[query]/answer': { as: 'coordinator', url: (i) => `${S(i)}/sites/AAA/queries/${i.query}/answer`, body: () => ({ text: 'Checked the notes.' }) },
  'POST /api/studies/[study]/sites/[site]/queries/[query]/close': { as: 'monitor', url: (i) => `${S(i)}/sites/AAA/queries/${i.query}/close`, body: () => ({ text: 'Accepted.' }) },
  'POST /api/studies/[study]/sites/[site]/queries/[query]/reopen': { as: 'monitor', url: (i) => `${S(i)}/sites/AAA/queries/${i.query}/reopen`, body: () => ({ text: 'Still differs.' }) },
  'POST /api/studies/[study]/sites/[site]/screening': { as: 'coordinator', url: (i) => `${S(i)}/sites/AAA/screening`, body: () => ({ screeningNumber: uniq('S'), screeningDate: '2026-12-01', age: 33, sex: 'M' }) },
  'POST /api/studies/[study]/sites/[site]/screening/[participant]/outcome': { as: 'coordinator', url: (i) => `${S(i)}/sites/AAA/screening/${i.unrandomised}/outcome`, body: () => ({ outcome: 'declined', reason: 'changed their mind' }) },
  'POST /api/studies/[study]/users/[userId]/deactivate': { as: 'admin', url: (i) => `${S(i)}/users/${i.userId}/deactivate`, body: () => ({ reason: 'left the hospital' }) },
  'POST /api/studies/[study]/users/[userId]/invitations': { as: 'admin', url: (i) => `${S(i)}/users/${i.userId}/invitations`, body: () => ({}) },
};

let study: Study;
let aaa: Site;
let users: Awaited<ReturnType<typeof lockStudy>>['users'];
let ids: Ids;
const clients = new Map<Who, Client>();

beforeAll(async () => {
  const s = await lockStudy('LOCKW');
  ({ study, users } = s);
  aaa = s.sites.AAA;
  const coord = users.coordinator.user.id;
  const p = await randomised(study, aaa, coord);
  const unr = await readyParticipant(study, aaa, { coordinatorId: coord });
  const rec = (await CrfRecord.findOne({ where: { participantId: p.id, formKey: 'baseline' } }))!;
  const q = await openQuery({ studyId: study.id, siteId: aaa.id, recordId: rec.id, itemPath: '/AGE', message: 'Please check the age against the notes.', actor: { userId: users.monitor.user.id, role: 'monitor' } });
  await answerQuery({ studyId: study.id, siteId: aaa.id, queryId: q.id, text: 'Checked.', actor: { userId: coord, role: 'coordinator' } });
  const m = (await Membership.findOne({ where: { userId: users.monitor.user.id, studyId: study.id } }))!;
  ids = { study: study.code, participant: p.id, unrandomised: unr.id, record: rec.id, recordVersion: rec.lockVersion, query: q.id, membership: m.id, userId: users.monitor.user.id };
  const dm = { userId: users.dm1.user.id, role: 'data_manager' as const };
  await setLock({ studyId: study.id, siteId: null, level: 'soft', actor: dm });
  await setLock({ studyId: study.id, siteId: null, level: 'hard', override: true, reason: 'route table check', actor: dm });
  for (const who of ['coordinator', 'monitor', 'investigator', 'dm1', 'admin'] as Who[]) clients.set(who, await client(users[who].email));
});

describe('hard lock: every write route', () => {
  it('the table lists exactly the write routes the app has', () => {
    const found = discoverWriteRoutes();
    expect(found.length).toBeGreaterThan(20);
    expect(Object.keys(TABLE).sort()).toEqual(found);
  });

  it('answers 423 locked for each one, for a user who would otherwise be allowed, and writes nothing', async () => {
    const tables = ['audit_events', 'participants', 'crf_records', 'queries', 'query_messages', 'verifications', 'signatures', 'uploads', 'allocations', 'unblinding_events', 'memberships', 'invitations', 'sites'];
    const before = await Promise.all(tables.map((t) => count(privDb(), t)));
    const results: Record<string, { status: number; code?: string; message?: string }> = {};
    for (const [key, row] of Object.entries(TABLE)) {
      if ('exempt' in row) continue;
      const method = key.split(' ')[0];
      const c = clients.get(row.as)!;
      let status: number;
      let body: { error?: { code: string; message: string } };
      if (row.raw) {
        const res = await c.raw(row.url(ids), { method, headers: { 'content-type': row.raw.type, accept: 'application/json' }, body: new Uint8Array(row.raw.bytes) });
        status = res.status;
        body = await res.json();
      } else {
        ({ status, body } = await c.json(method, row.url(ids), row.body?.(ids) ?? {}));
      }
      results[key] = { status, code: body?.error?.code, message: body?.error?.message };
    }
    for (const [key, r] of Object.entries(results)) {
      expect(r, key).toMatchObject({ status: 423, code: 'locked' });
      expect(r.message, key).toMatch(/^Study LOCKW-[A-F0-9]+ is hard-locked since .* UTC: no changes are accepted/);
    }
    expect(Object.keys(results).length).toBe(Object.values(TABLE).filter((r) => !('exempt' in r)).length);
    expect(await Promise.all(tables.map((t) => count(privDb(), t)))).toEqual(before);
  });

  it('the lock routes stay usable: they answer on their own terms, never 423', async () => {
    const dm1 = clients.get('dm1')!;
    const again = await dm1.post(`${S(ids)}/lock`, { level: 'hard' });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toMatch(/already hard-locked/);
    expect((await dm1.post(`${S(ids)}/lock/unlock-requests/999999999/approve`, {})).status).toBe(404);
    const req = await dm1.post(`${S(ids)}/lock/unlock-requests`, { reason: 'checking that unlock stays possible' });
    expect(req.status).toBe(200);
    expect(req.body.status).toBe('pending');
    expect((await lockState(study.id, aaa.id)).level).toBe('hard');
  });

  it('the domain functions refuse as well when called directly', async () => {
    const coord = { userId: users.coordinator.user.id, role: 'coordinator' as const };
    const locked = { code: 'locked' };
    await expect(saveRecord({ study, siteId: aaa.id, participantId: ids.participant, formKey: 'adverse_event', data: example('adverse_event'), intent: 'submit', baseVersion: null, actor: { userId: coord.userId, roles: ['coordinator'] }, today: '2026-12-02' })).rejects.toMatchObject(locked);
    await expect(recordScreening({ studyId: study.id, siteId: aaa.id, screeningNumber: uniq('S'), screeningDate: '2026-12-01', age: 40, sex: 'F', actor: coord })).rejects.toMatchObject(locked);
    await expect(storeConsentUpload({ studyId: study.id, siteId: aaa.id, participantId: ids.participant, bytes: PDF, actor: coord })).rejects.toMatchObject(locked);
    await expect(answerQuery({ studyId: study.id, siteId: aaa.id, queryId: ids.query, text: 'late answer', actor: coord })).rejects.toMatchObject(locked);
    await expect(emergencyUnblind({ study, site: aaa, participantId: ids.participant, reason: 'clinical emergency, allocation needed', actor: { userId: users.investigator.user.id, role: 'investigator' } })).rejects.toMatchObject(locked);
    await expect(addMembership({ studyId: study.id, userId: users.monitor.user.id, role: 'investigator', siteCode: null, actor: { userId: users.admin.user.id, role: 'admin' } })).rejects.toMatchObject(locked);
    expect(await Query.count({ where: { studyId: study.id } })).toBe(1);
    expect(await Participant.count({ where: { studyId: study.id } })).toBe(2);
  });
});
