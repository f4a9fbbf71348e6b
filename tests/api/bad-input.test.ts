// Bad request bodies get a clear 4xx and write nothing: malformed JSON, unknown fields,
// wrong types, wrong content type, oversize bodies.
import { describe, it, expect } from 'vitest';
import { DEMO, signedIn } from '../support/http';
import { count } from '../support/db';
import { sequelize } from '@/models';

const tables = ['sites', 'users', 'memberships', 'invitations', 'audit_events'];
const snapshot = async () => Object.fromEntries(await Promise.all(tables.map(async (t) => [t, await count(sequelize, t)])));

describe('bad request bodies', () => {
  const cases: { name: string; body: unknown; headers?: Record<string, string>; status: number; code: string; field?: string }[] = [
    { name: 'malformed JSON', body: '{"code": "ZZ", ', status: 400, code: 'malformed_json' },
    { name: 'not an object', body: '[1,2,3]', status: 400, code: 'validation_failed' },
    { name: 'unknown field', body: { code: 'ZZ1', name: 'Zed', timeZone: 'UTC', recruitmentTarget: 3, colour: 'red' }, status: 400, code: 'validation_failed', field: 'colour' },
    { name: '__proto__ key', body: '{"code":"ZZ2","name":"Zed","timeZone":"UTC","recruitmentTarget":3,"__proto__":{"admin":true}}', status: 400, code: 'validation_failed' },
    { name: 'wrong type', body: { code: 'ZZ3', name: 'Zed', timeZone: 'UTC', recruitmentTarget: 'forty' }, status: 400, code: 'validation_failed', field: 'recruitmentTarget' },
    { name: 'missing field', body: { code: 'ZZ4', name: 'Zed', timeZone: 'UTC' }, status: 400, code: 'validation_failed', field: 'recruitmentTarget' },
    { name: 'unknown time zone', body: { code: 'ZZ5', name: 'Zed', timeZone: 'Mars/Olympus', recruitmentTarget: 3 }, status: 400, code: 'validation_failed', field: 'timeZone' },
    { name: 'wrong content type', body: 'code=ZZ6', headers: { 'content-type': 'text/plain' }, status: 415, code: 'unsupported_media_type' },
    { name: 'oversize body', body: JSON.stringify({ code: 'ZZ7', name: 'x'.repeat(70 * 1024), timeZone: 'UTC', recruitmentTarget: 1 }), status: 413, code: 'payload_too_large' },
  ];

  for (const c of cases) {
    it(`${c.name} → ${c.status} ${c.code}, nothing written`, async () => {
      const admin = await signedIn(DEMO.admin);
      const before = await snapshot();
      const r = await admin.json('POST', '/api/studies/TEMPO-FT/sites', c.body, c.headers);
      expect(r.status).toBe(c.status);
      expect(r.body.error.code).toBe(c.code);
      expect(r.body.error.message.length).toBeGreaterThan(10);
      if (c.field) expect(Object.keys(r.body.error.fields)).toContain(c.field);
      expect(await snapshot()).toEqual(before);
    });
  }

  it('a field message says what to do', async () => {
    const admin = await signedIn(DEMO.admin);
    const r = await admin.post('/api/studies/TEMPO-FT/sites', { code: 'ZZ8', name: 'Zed', timeZone: 'UTC' });
    expect(r.body.error.fields.recruitmentTarget).toBe('This field is required.');
  });

  it('a valid body is written with its audit row', async () => {
    const admin = await signedIn(DEMO.admin);
    const before = await snapshot();
    const r = await admin.post('/api/studies/TEMPO-FT/sites', { code: `Q${Date.now() % 100000}`, name: 'Quayside Clinic', timeZone: 'Europe/London', recruitmentTarget: 10 });
    expect(r.status).toBe(200);
    const after = await snapshot();
    expect(after.sites).toBe(before.sites + 1);
    expect(after.audit_events).toBe(before.audit_events + 1);
  });
});
