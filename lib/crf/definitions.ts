import 'server-only';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import type { ValidateFunction } from 'ajv';
import { FormDefinition, StudyForm, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { appendAudit } from '@/lib/audit';
import { compileOrExplain, createAjv, draftSchema } from './ajv';
import { validateRules, type Rule } from './rules';

export type FormAccess = 'all' | 'unblinded' | 'assessor';

/** A form definition as read from forms/<key>/ or from the database. */
export type FormDef = {
  key: string;
  version: number;
  title: string;
  access: FormAccess;
  schema: Record<string, unknown>;
  ui: Record<string, unknown>;
  rules: { rules: Rule[] };
  hash: string;
};

/** A definition with its compiled validators (full for submission, draft without `required`). */
export type CompiledForm = FormDef & { validateFull: ValidateFunction; validateDraft: ValidateFunction; derivedKeys: string[] };

const ACCESS = new Set<FormAccess>(['all', 'unblinded', 'assessor']);

/** SHA-256 over the three files' canonical JSON, so formatting changes do not count as content changes. */
export function definitionHash(schema: unknown, ui: unknown, rules: unknown): string {
  return createHash('sha256').update(JSON.stringify([schema, ui, rules])).digest('hex');
}

function readJsonFile(file: string): Record<string, unknown> {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch {
    throw new Error(`${file} is missing.`);
  }
  try {
    return JSON.parse(text) as Record<string, unknown>;
  } catch (e) {
    throw new Error(`${file} is not valid JSON: ${(e as Error).message}`);
  }
}

/** Checks and compiles a definition; every problem names the file it is in. */
export function compileDefinition(def: Omit<FormDef, 'hash'> & { hash?: string }, where = `forms/${def.key}`): CompiledForm {
  const ajv = createAjv();
  const validateFull = compileOrExplain(ajv, def.schema, `${where}/schema.json`);
  const validateDraft = compileOrExplain(createAjv(), draftSchema(def.schema), `${where}/schema.json (draft)`);
  const rules = { rules: validateRules(def.rules, `${where}/rules.json`) };
  const props = (def.schema.properties ?? {}) as Record<string, { 'x-derived'?: boolean }>;
  const derivedKeys = Object.keys(props).filter((k) => props[k]['x-derived'] === true);
  return { ...def, rules, hash: def.hash ?? definitionHash(def.schema, def.ui, def.rules), validateFull, validateDraft, derivedKeys };
}

/** Reads and compiles forms/<key>/. Throws with the file name and the problem when anything is wrong. */
export function readFormFolder(dir: string): CompiledForm {
  const key = path.basename(dir);
  const where = `forms/${key}`;
  const schema = readJsonFile(path.join(dir, 'schema.json'));
  const ui = readJsonFile(path.join(dir, 'ui.json'));
  const rulesDoc = readJsonFile(path.join(dir, 'rules.json'));
  if (schema['x-form-key'] !== key) throw new Error(`${where}/schema.json: x-form-key must be "${key}" (the folder name).`);
  const version = schema['x-form-version'];
  if (!Number.isInteger(version) || (version as number) < 1) throw new Error(`${where}/schema.json: x-form-version must be an integer of at least 1.`);
  if (typeof schema.title !== 'string' || !schema.title) throw new Error(`${where}/schema.json: the form needs a title.`);
  const access = (schema['x-access'] ?? 'all') as FormAccess;
  if (!ACCESS.has(access)) throw new Error(`${where}/schema.json: x-access must be all, unblinded or assessor.`);
  return compileDefinition({ key, version: version as number, title: schema.title, access, schema, ui, rules: rulesDoc as FormDef['rules'] }, where);
}

/** Every form folder under `root` (default: forms/ of the working directory). */
export function readAllForms(root = path.join(process.cwd(), 'forms')): CompiledForm[] {
  return readdirSync(root)
    .filter((e) => statSync(path.join(root, e)).isDirectory() && existsSync(path.join(root, e, 'schema.json')))
    .sort()
    .map((e) => readFormFolder(path.join(root, e)));
}

const compiledCache = new Map<string, CompiledForm>();

/**
 * Publishes a definition: inserted once per key and version. The same version with other content is refused,
 * because records entered on it must keep meaning what they meant.
 */
export async function publishDefinition(def: CompiledForm): Promise<'published' | 'unchanged'> {
  const existing = await FormDefinition.findOne({ where: { formKey: def.key, version: def.version } });
  if (existing) {
    if (existing.contentHash !== def.hash) {
      throw new AppError('conflict', `forms/${def.key}: version ${def.version} is already published with different content. Raise x-form-version to publish a change.`);
    }
    return 'unchanged';
  }
  await sequelize.transaction(async (t) => {
    const row = await FormDefinition.create(
      { formKey: def.key, version: def.version, title: def.title, access: def.access, schemaJson: def.schema, uiJson: def.ui, rulesJson: def.rules as unknown as Record<string, unknown>, contentHash: def.hash },
      { transaction: t },
    );
    await appendAudit(t, [{ actorUserId: null, actorRole: 'system', entityType: 'form_definition', entityId: row.id, action: 'publish', newValue: { key: def.key, version: def.version, hash: def.hash } }]);
  });
  return 'published';
}

/** Pins a study to a form version for new records (audited); records already entered keep theirs. */
export async function pinForm(studyId: number, key: string, version: number, actor: { userId: number | null; role: string; requestId?: string }) {
  const def = await FormDefinition.findOne({ where: { formKey: key, version } });
  if (!def) throw new AppError('not_found', `Version ${version} of the form ${key} is not published.`);
  await sequelize.transaction(async (t) => {
    const pin = await StudyForm.findOne({ where: { studyId, formKey: key }, transaction: t, lock: t.LOCK.UPDATE });
    if (pin?.version === version) return;
    if (pin) await pin.update({ version }, { transaction: t });
    else await StudyForm.create({ studyId, formKey: key, version }, { transaction: t });
    await appendAudit(t, [{ actorUserId: actor.userId, actorRole: actor.role, studyId, entityType: 'study_form', entityId: `${studyId}:${key}`, action: 'pin', itemPath: '/version', oldValue: pin?.version ?? null, newValue: version, requestId: actor.requestId }]);
  });
}

/** Loads a published version (compiled once per process). */
export async function getDefinition(key: string, version: number): Promise<CompiledForm> {
  const id = `${key}@${version}`;
  const hit = compiledCache.get(id);
  if (hit) return hit;
  const row = await FormDefinition.findOne({ where: { formKey: key, version } });
  if (!row) throw new AppError('not_found', `Version ${version} of the form ${key} is not published.`);
  const compiled = compileDefinition({
    key, version, title: row.title, access: row.access as FormAccess, schema: row.schemaJson, ui: row.uiJson, rules: row.rulesJson as unknown as FormDef['rules'], hash: row.contentHash,
  });
  compiledCache.set(id, compiled);
  return compiled;
}

/** The version a study uses for new records of a form. */
export async function pinnedVersion(studyId: number, key: string): Promise<number> {
  const pin = await StudyForm.findOne({ where: { studyId, formKey: key } });
  if (!pin) throw new AppError('not_found', `The study does not use a form called ${key}.`);
  return pin.version;
}

/** All forms a study pins, with title and access (for menus and casebooks). */
export async function studyForms(studyId: number): Promise<{ key: string; version: number; title: string; access: FormAccess }[]> {
  const pins = await StudyForm.findAll({ where: { studyId }, order: [['formKey', 'ASC']] });
  const out = [];
  for (const p of pins) {
    const d = await getDefinition(p.formKey, p.version);
    out.push({ key: d.key, version: d.version, title: d.title, access: d.access });
  }
  return out;
}
