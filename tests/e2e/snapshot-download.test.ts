// The statistician downloads the spreadsheet of a snapshot from the locked-datasets page in Chromium; the file is
// opened with exceljs and its snapshot sheet names the study and the snapshot hash.
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import { describe, it, expect, beforeAll } from 'vitest';
import ExcelJS from 'exceljs';
import { Site, Study } from '@/models';
import { DEMO_STUDY } from '@/lib/studies/demo';
import { pinForm } from '@/lib/crf/definitions';
import { randomiseParticipant } from '@/lib/allocation';
import { listSnapshots, type SnapshotView } from '@/lib/snapshot';
import { setLock } from '@/lib/lock';
import { makeUser, TEST_PASSWORD, uniq } from '../support/factories';
import { ensureActivated, readyParticipant } from '../support/ready';
import { BASE } from '../support/http';
import { launch, OUTPUT, screenshot, signInPage } from '../support/browser';

let study: Study;
let stat: { email: string };
let snap: SnapshotView;

beforeAll(async () => {
  study = await Study.create({ code: uniq('SNAPUI').toUpperCase(), title: 'Snapshot page check', config: DEMO_STUDY.config, status: 'recruiting' });
  const site = await Site.create({ studyId: study.id, code: `X${randomBytes(3).toString('hex').toUpperCase()}`, name: 'Alder Clinic', timeZone: 'UTC', recruitmentTarget: 4 });
  for (const f of ['eligibility', 'consent', 'baseline', 'operation', 'follow_up', 'adverse_event', 'protocol_deviation', 'end_of_participation', 'therapy_session']) await pinForm(study.id, f, 1, { userId: null, role: 'system' });
  await ensureActivated(study);
  const coord = await makeUser([{ role: 'coordinator', site: null, studyId: study.id }]);
  const dm = await makeUser([{ role: 'data_manager', site: null, studyId: study.id }]);
  stat = await makeUser([{ role: 'statistician', site: null, studyId: study.id }]);
  const p = await readyParticipant(study, site, { coordinatorId: coord.user.id });
  await randomiseParticipant({ study, site, participantId: p.id, actor: { userId: coord.user.id, role: 'coordinator' } });
  const dmActor = { userId: dm.user.id, role: 'data_manager' as const };
  await setLock({ studyId: study.id, siteId: null, level: 'soft', actor: dmActor });
  await setLock({ studyId: study.id, siteId: null, level: 'hard', override: true, reason: 'download check', actor: dmActor });
  snap = (await listSnapshots(study.id))[0];
}, 120_000);

describe('locked-datasets page', () => {
  it('the statistician finds it from the study page and downloads the spreadsheet', async () => {
    const browser = await launch();
    try {
      const page = await signInPage(browser, stat.email, TEST_PASSWORD);
      await page.goto(`${BASE}/studies/${study.code}`);
      await page.getByRole('link', { name: 'Locked datasets and exports' }).click();
      await page.getByRole('heading', { name: 'Locked datasets' }).waitFor();
      await page.getByText('Verified: the stored schedule matches the commitment made at activation.').waitFor();
      expect(await page.getByText(snap.snapshotHash).count()).toBeGreaterThan(0);
      // A statistician cannot take snapshots.
      expect(await page.getByRole('button', { name: 'Take the snapshot again' }).count()).toBe(0);
      await page.getByText(/^Manifest/).click();
      await screenshot(page, 'snapshot-page-statistician');
      const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'Spreadsheet (.xlsx), full' }).click()]);
      expect(download.suggestedFilename()).toBe(`${study.code}-snapshot-${snap.id}-full.xlsx`);
      const file = path.join(OUTPUT, `snapshot-${study.code}.xlsx`);
      await download.saveAs(file);
      const wb = new ExcelJS.Workbook();
      await wb.xlsx.readFile(file);
      expect(wb.worksheets.map((w) => w.name)).toEqual(expect.arrayContaining(['snapshot', 'participants', 'eligibility', 'follow_up', 'dictionary', 'allocation', 'audit_trail']));
      const kv = new Map<string, unknown>();
      wb.getWorksheet('snapshot')!.eachRow((r) => kv.set(String(r.getCell(1).value), r.getCell(2).value));
      expect(kv.get('Study')).toBe(study.code);
      expect(kv.get('Snapshot hash (SHA-256 over the manifest)')).toBe(snap.snapshotHash);
      expect(wb.getWorksheet('allocation')!.rowCount).toBe(3);
    } finally {
      await browser.close();
    }
  });
});
