// Path traversal in uploads and downloads: whatever name, path or NUL byte a client sends with a file, the object key
// is the server's own (study/site/participant/random id) and nothing lands outside the object store; encoded
// traversal in route parameters finds nothing (404, never a file, never a 500); an upload id of another site or another
// study is refused through every route a user could try.
import { describe, it, expect, beforeAll } from 'vitest';
import path from 'node:path';
import { readdirSync, statSync } from 'node:fs';
import { Client, DEMO, signedIn } from '../support/http';
import { demoStudy, makeUser, siteOf, TEST_PASSWORD, uniq } from '../support/factories';
import { coordinatorOf, PDF } from '../support/ready';
import { recordScreening } from '@/lib/screening';
import { storeConsentUpload } from '@/lib/uploads';
import { Site, Study, Upload } from '@/models';
import { DEMO_STUDY } from '@/lib/studies/demo';

const KEY = /^studies\/\d+\/sites\/\d+\/participants\/\d+\/consent\/[A-Za-z0-9_-]{22}\.(pdf|png|jpg)$/;
const dataDir = process.env.TEST_DATA_DIR!;
const objectsDir = process.env.S3_FAKE_DIR ?? path.join(dataDir, 'objects');

function allFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((e) => {
    const p = path.join(dir, e);
    return statSync(p).isDirectory() ? allFiles(p) : [p];
  });
}

let coordHHC: Client;
let participantId: number;
let hhcUpload: string;
let otherStudy: { code: string; uploadId: string };

beforeAll(async () => {
  const study = await demoStudy();
  const hhc = await siteOf(study.id, 'HHC');
  const coord = await coordinatorOf('HHC');
  participantId = (await recordScreening({ studyId: study.id, siteId: hhc.id, screeningNumber: uniq('UPL'), screeningDate: '2026-11-20', age: 40, sex: 'F', actor: { userId: coord.id, role: 'coordinator' } })).id;
  coordHHC = await signedIn(DEMO.coordinatorHHC);
  hhcUpload = (await storeConsentUpload({ studyId: study.id, siteId: hhc.id, participantId, bytes: PDF, actor: { userId: coord.id, role: 'coordinator' } })).id;
  // Another study with a site also called HHC and an upload of its own.
  const s2 = await Study.create({ code: uniq('UPS').toUpperCase(), title: 'Another study', config: DEMO_STUDY.config, status: 'recruiting' });
  const site2 = await Site.create({ studyId: s2.id, code: 'HHC', name: 'Harbourside (other study)', timeZone: 'UTC', recruitmentTarget: 5 });
  const c2 = await makeUser([{ role: 'coordinator', site: 'HHC', studyId: s2.id }]);
  const p2 = await recordScreening({ studyId: s2.id, siteId: site2.id, screeningNumber: uniq('UPS'), screeningDate: '2026-11-20', age: 50, sex: 'M', actor: { userId: c2.user.id, role: 'coordinator' } });
  otherStudy = { code: s2.code, uploadId: (await storeConsentUpload({ studyId: s2.id, siteId: site2.id, participantId: p2.id, bytes: PDF, actor: { userId: c2.user.id, role: 'coordinator' } })).id };
});

describe('uploads: names the client sends are never paths', () => {
  const hostile: [string, string, Record<string, string>][] = [
    ['../ in a Content-Disposition name', '', { 'content-disposition': 'attachment; filename="../../../../secrets.json"' }],
    ['an absolute path as a name header', '', { 'x-file-name': '/etc/passwd' }],
    ['a NUL byte in the name', '', { 'content-disposition': 'attachment; filename="consent.pdf%00.sh"', 'x-file-name': 'a\\u0000b' }],
    ['encoded traversal in the query', '?name=..%2F..%2F..%2Fsecrets.json&key=%2e%2e%2f%2e%2e%2fevil.pdf', {}],
    ['an absolute key in the query', '?key=%2Ftmp%2Fevil.pdf&path=C:%5Cevil.pdf', {}],
  ];
  for (const [what, query, headers] of hostile) {
    it(`stores the file under the server's own key (${what})`, async () => {
      const before = new Set(allFiles(dataDir));
      const res = await coordHHC.raw(`/api/studies/TEMPO-FT/sites/HHC/participants/${participantId}/uploads${query}`, { method: 'POST', headers: { 'content-type': 'application/pdf', ...headers }, body: PDF });
      const body = (await res.json()) as { id: string };
      expect(res.status).toBe(200);
      expect(body.id).toMatch(/^[A-Za-z0-9_-]{22}$/);
      const u = await Upload.findOne({ where: { publicId: body.id } });
      expect(u!.objectKey).toMatch(KEY);
      // Every new file in the data directory is inside the object store, and none is named after the request.
      const added = allFiles(dataDir).filter((f) => !before.has(f) && !/mariadb|mysql|\.sock|mail/.test(f));
      expect(added.length).toBeGreaterThan(0);
      for (const f of added) {
        expect(path.relative(objectsDir, f).startsWith('..'), f).toBe(false);
        expect(f).not.toMatch(/secrets|passwd|evil|\.sh|\0/);
      }
    });
  }
});

describe('downloads: encoded traversal in route parameters', () => {
  const ids = [
    '..%2F..%2Fsecrets.json', '%2e%2e%2f%2e%2e%2fsecrets.json', '%2E%2E%2F%2E%2E%2F%2E%2E%2Fetc%2Fpasswd', '..%252f..%252fsecrets.json',
    '%2Fetc%2Fpasswd', '..%5C..%5Csecrets.json', 'abcdefgh%00.pdf', '....%2F%2F....%2F%2Fetc',
  ];
  it('finds nothing for any of them (404, JSON, no file content)', async () => {
    const wrong: string[] = [];
    for (const id of [...ids, `${hhcUpload}%00`, `${hhcUpload}%2F..%2F..`]) {
      const res = await coordHHC.raw(`/api/studies/TEMPO-FT/sites/HHC/uploads/${id}`);
      const text = await res.text();
      if (![400, 404].includes(res.status) || !res.headers.get('content-type')?.includes('application/json') || /%PDF|root:|nextauthSecret/.test(text)) wrong.push(`${id}: ${res.status} ${text.slice(0, 80)}`);
    }
    expect(wrong).toEqual([]);
  });

  it('treats a bare dot-dot segment as URL syntax: the router resolves it to the parent route, never to a file', async () => {
    for (const id of ['%2e%2e', '%2E%2E', '.%2e']) {
      const res = await coordHHC.raw(`/api/studies/TEMPO-FT/sites/HHC/uploads/${id}`);
      const text = await res.text();
      expect(res.status, id).toBe(308);
      expect(res.headers.get('location'), id).toBe('/api/studies/TEMPO-FT/sites/HHC');
      expect(text).not.toMatch(/%PDF/);
    }
  });

  it('answers 400 (JSON, with the security headers) to percent-encoding that is not UTF-8, never a 500', async () => {
    for (const url of [`/api/studies/TEMPO-FT/sites/HHC/uploads/%C0%AE%C0%AE%2F`, `/api/studies/%FF/sites/HHC/uploads/${hhcUpload}`, `/studies/TEMPO-FT/sites/%E0%80/participants`]) {
      const res = await coordHHC.raw(url);
      const body = (await res.json()) as { error: { code: string } };
      expect(res.status, url).toBe(400);
      expect(body.error.code).toBe('bad_request');
      expect(res.headers.get('content-security-policy')).toContain("frame-ancestors 'none'");
      expect(res.headers.get('x-content-type-options')).toBe('nosniff');
    }
  });

  it('finds nothing when the study or site segment carries the traversal', async () => {
    const wrong: string[] = [];
    for (const url of [
      `/api/studies/..%2F..%2FTEMPO-FT/sites/HHC/uploads/${hhcUpload}`,
      `/api/studies/TEMPO-FT%2F..%2F${otherStudy.code}/sites/HHC/uploads/${otherStudy.uploadId}`,
      `/api/studies/TEMPO-FT/sites/MLB%2F..%2FHHC/uploads/${hhcUpload}`,
      `/api/studies/TEMPO-FT/sites/%2e%2e/uploads/${hhcUpload}`,
    ]) {
      const res = await coordHHC.raw(url);
      const text = await res.text();
      if (![400, 403, 404].includes(res.status) || /%PDF/.test(text)) wrong.push(`${url}: ${res.status}`);
    }
    expect(wrong).toEqual([]);
  });

  it('serves the site’s own file to its coordinator (the control)', async () => {
    const res = await coordHHC.raw(`/api/studies/TEMPO-FT/sites/HHC/uploads/${hhcUpload}`);
    expect(res.status).toBe(200);
    expect(Buffer.from(await res.arrayBuffer()).equals(PDF)).toBe(true);
    expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="consent-\d+-[A-Za-z0-9_-]{8}\.pdf"$/);
  });
});

describe('downloads: another site’s or another study’s upload id', () => {
  it('is refused through another site’s route, even for a study-wide data manager', async () => {
    const mlb = await signedIn(DEMO.coordinatorMLB);
    expect((await mlb.get(`/api/studies/TEMPO-FT/sites/MLB/uploads/${hhcUpload}`)).status).toBe(404);
    expect((await mlb.get(`/api/studies/TEMPO-FT/sites/HHC/uploads/${hhcUpload}`)).status).toBe(403);
    const dm = await signedIn(DEMO.dataManager);
    expect((await dm.get(`/api/studies/TEMPO-FT/sites/MLB/uploads/${hhcUpload}`)).status).toBe(404);
    expect((await dm.get(`/api/studies/TEMPO-FT/sites/HHC/uploads/${hhcUpload}`)).status).toBe(200);
  });

  it('is refused through our own study’s route and the other study’s route', async () => {
    const dm = await signedIn(DEMO.dataManager);
    expect((await dm.get(`/api/studies/TEMPO-FT/sites/HHC/uploads/${otherStudy.uploadId}`)).status).toBe(404);
    expect((await dm.get(`/api/studies/${otherStudy.code}/sites/HHC/uploads/${otherStudy.uploadId}`)).status).toBe(403);
    expect((await coordHHC.get(`/api/studies/TEMPO-FT/sites/HHC/uploads/${otherStudy.uploadId}`)).status).toBe(404);
  });

  it('is refused to a user with no membership at all', async () => {
    const { email } = await makeUser([]);
    const c = await signedIn(email, TEST_PASSWORD);
    expect((await c.get(`/api/studies/TEMPO-FT/sites/HHC/uploads/${hhcUpload}`)).status).toBe(403);
  });
});
