import Ajv, { type ErrorObject, type ValidateFunction } from 'ajv';
import addFormats from 'ajv-formats';

/** Keywords of Excursion's own that CRF schemas may carry (see forms/README.md). */
export const EXCURSION_KEYWORDS = ['x-form-key', 'x-form-version', 'x-access', 'x-units', 'x-derived'] as const;

export const LOCAL_TIME = /^([01]\d|2[0-3]):[0-5]\d(:[0-5]\d)?$/;

/** A strict AJV instance: unknown keywords, ambiguous types and unused schema parts are errors. */
export function createAjv(): Ajv {
  const ajv = new Ajv({ strict: true, allErrors: true, allowUnionTypes: false, useDefaults: false, coerceTypes: false });
  addFormats(ajv, ['date', 'date-time', 'email', 'uri']);
  // A time of day as people type it at a site (HH:MM or HH:MM:SS, local time, no offset).
  ajv.addFormat('time', LOCAL_TIME);
  ajv.addVocabulary([...EXCURSION_KEYWORDS]);
  return ajv;
}

/** Removes `required` everywhere, so a draft is checked for types and ranges but may leave items empty. */
export function draftSchema<T>(schema: T): T {
  if (Array.isArray(schema)) return schema.map(draftSchema) as T;
  if (!schema || typeof schema !== 'object') return schema;
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(schema)) if (k !== 'required') out[k] = draftSchema(v);
  return out as T;
}

/** Compiles a schema, turning AJV's complaint into a message that names the file and the problem. */
export function compileOrExplain(ajv: Ajv, schema: object, file: string): ValidateFunction {
  try {
    return ajv.compile(schema);
  } catch (e) {
    throw new Error(`${file} does not compile in strict mode: ${(e as Error).message}`);
  }
}

/** AJV errors as per-item messages keyed by JSON Pointer. */
export function itemErrors(errors: ErrorObject[] | null | undefined): Record<string, string> {
  const out: Record<string, string> = {};
  for (const e of errors ?? []) {
    let path = e.instancePath || '';
    let msg = e.message ?? 'is not valid';
    if (e.keyword === 'required') {
      path = `${path}/${(e.params as { missingProperty: string }).missingProperty}`;
      msg = 'This item is required before the form can be submitted.';
    } else if (e.keyword === 'additionalProperties') {
      path = `${path}/${(e.params as { additionalProperty: string }).additionalProperty}`;
      msg = 'This item is not part of the form.';
    } else if (e.keyword === 'minimum' || e.keyword === 'maximum') {
      msg = `Must be ${e.keyword === 'minimum' ? 'at least' : 'at most'} ${(e.params as { limit: number }).limit}.`;
    } else if (e.keyword === 'oneOf' || e.keyword === 'const' || e.keyword === 'enum') {
      msg = 'Choose one of the listed answers.';
    } else if (e.keyword === 'format') {
      msg = `Enter a valid ${(e.params as { format: string }).format} (${(e.params as { format: string }).format === 'date' ? 'YYYY-MM-DD' : 'ISO 8601'}).`;
    } else if (e.keyword === 'type') {
      msg = `Expected ${(e.params as { type: string }).type}.`;
    }
    const key = path || '/';
    // Keep the first, most specific message per item (oneOf also reports each branch).
    if (!(key in out) || e.keyword === 'oneOf') out[key] = msg;
  }
  return out;
}
