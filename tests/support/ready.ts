// Builds participants through the same domain functions the app uses, up to "ready to randomise".
import { readFileSync } from 'node:fs';
import { recordScreening } from '@/lib/screening';
import { saveRecord } from '@/lib/crf/records';
import { storeConsentUpload } from '@/lib/uploads';
import { RandomisationSetup, Site, Study, User } from '@/models';
import { activateRandomisation } from '@/lib/allocation';
import { uniq } from './factories';

export const example = (form: string, name = 'valid-1') => JSON.parse(readFileSync(`forms/${form}/examples/${name}.json`, 'utf8')) as Record<string, unknown>;
export const PDF = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n');

export async function coordinatorOf(site: string) {
  return (await User.findOne({ where: { email: `coordinator.${site.toLowerCase()}@tempo-ft.example` } }))!;
}

/** A screened participant with the given forms submitted (default: everything randomisation needs). */
export async function readyParticipant(study: Study, site: Site, opts: { fingers?: number; skip?: string[]; eligibility?: Record<string, unknown>; coordinatorId?: number } = {}) {
  const coord = opts.coordinatorId ? { id: opts.coordinatorId } : await coordinatorOf(site.code);
  const actor = { userId: coord.id, roles: ['coordinator' as const] };
  const p = await recordScreening({ studyId: study.id, siteId: site.id, screeningNumber: uniq('R'), screeningDate: '2026-11-20', age: 41, sex: 'M', actor: { userId: coord.id, role: 'coordinator' } });
  const save = (formKey: string, data: Record<string, unknown>) => saveRecord({ study, siteId: site.id, participantId: p.id, formKey, data, intent: 'submit', baseVersion: null, actor, today: '2026-12-02' });
  const skip = opts.skip ?? [];
  if (!skip.includes('eligibility')) await save('eligibility', opts.eligibility ?? example('eligibility'));
  if (!skip.includes('consent')) {
    const up = skip.includes('upload') ? { id: 'missing-file-0001' } : await storeConsentUpload({ studyId: study.id, siteId: site.id, participantId: p.id, bytes: PDF, actor: { userId: coord.id, role: 'coordinator' } });
    await save('consent', { ...example('consent'), consent_file_id: up.id });
  }
  if (!skip.includes('baseline')) await save('baseline', example('baseline'));
  if (!skip.includes('operation')) {
    const op = example('operation');
    const fingers = (op.fingers as Record<string, unknown>[]).slice(0, 1);
    const names = ['index', 'middle', 'ring', 'little'];
    const n = opts.fingers ?? 1;
    await save('operation', { ...op, fingers: Array.from({ length: n }, (_, i) => ({ ...fingers[0], finger: names[i] })) });
  }
  return p;
}

/** Activates randomisation for the study unless it already is (activation happens once per study). */
export async function ensureActivated(study: Study) {
  if (await RandomisationSetup.findOne({ where: { studyId: study.id } })) return;
  const dm = (await User.findOne({ where: { email: 'datamanager@tempo-ft.example' } }))!;
  await activateRandomisation({ study, actor: { userId: dm.id, role: 'data_manager' } });
}
