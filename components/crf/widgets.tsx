'use client';
import { useState } from 'react';
import type { FieldProps, FieldTemplateProps, RegistryFieldsType, RegistryWidgetsType, TemplatesType, WidgetProps, ObjectFieldTemplateProps, ArrayFieldTemplateProps } from '@rjsf/utils';

/** What the form passes to templates: the record (for item history) and how to open a history panel. */
export type CrfFormContext = { recordId: number | null; openHistory: (pointer: string) => void; uploadUrl?: string };

const pointerOf = (path: (string | number)[] | undefined) => '/' + (path ?? []).map((t) => String(t).replace(/~/g, '~0').replace(/\//g, '~1')).join('/');

/** One item: label, the input with its unit, help, errors, and a quiet history affordance. */
function FieldTemplate(p: FieldTemplateProps) {
  const { id, label, required, displayLabel, rawErrors, children, schema, help, description, hidden, registry, fieldPathId } = p;
  if (hidden) return <div className="hidden">{children}</div>;
  const ctx = registry.formContext as CrfFormContext;
  const isContainer = schema.type === 'object' || schema.type === 'array';
  const units = (schema as { 'x-units'?: string })['x-units'];
  const derived = (schema as { 'x-derived'?: boolean })['x-derived'];
  const pointer = pointerOf(fieldPathId?.path);
  if (isContainer) return <div className="mb-3">{children}{rawErrors?.length ? <p className="field-error">{rawErrors.join(' ')}</p> : null}</div>;
  return (
    <div className={`mb-3 ${rawErrors?.length ? 'border-l-4 border-danger pl-2' : ''}`}>
      <div className="flex items-baseline justify-between gap-2">
        {displayLabel && label && (
          <label htmlFor={id}>
            {label}
            {required && <span className="text-danger" aria-hidden="true"> *</span>}
            {derived && <span className="tag ml-2">calculated</span>}
          </label>
        )}
        {ctx.recordId !== null && pointer !== '/' && (
          <button type="button" className="text-xs text-ink-faint underline hover:text-glide" onClick={() => ctx.openHistory(pointer)} aria-label={`History of ${label || pointer}`}>
            history
          </button>
        )}
      </div>
      {displayLabel && description}
      <div className="flex items-center gap-2">
        {children}
        {units && <span className="text-sm text-ink-soft">{units === 'degrees' ? '°' : units}</span>}
      </div>
      {help}
      {rawErrors?.length ? <p className="field-error" role="alert">{rawErrors.join(' ')}</p> : null}
    </div>
  );
}

/** Groups of items as compact fieldsets. */
function ObjectFieldTemplate(p: ObjectFieldTemplateProps) {
  const top = !p.fieldPathId?.path?.length;
  return (
    <fieldset className={top ? '' : 'mb-3 rounded border border-line p-3'}>
      {!top && p.title && <legend className="px-1 text-sm font-semibold">{p.title}</legend>}
      {p.description && <p className="mb-2 text-sm text-ink-soft">{p.description}</p>}
      <div className="grid grid-cols-1 gap-x-6 md:grid-cols-2">
        {p.properties.map((e) => {
          const t = (p.schema.properties?.[e.name] as { type?: string } | undefined)?.type;
          return <div key={e.name} className={t === 'object' || t === 'array' ? 'md:col-span-2' : ''}>{e.content}</div>;
        })}
      </div>
    </fieldset>
  );
}

/** Repeating groups with add and remove buttons of our own look. */
function ArrayFieldTemplate(p: ArrayFieldTemplateProps) {
  return (
    <fieldset className="mb-3 rounded border border-line p-3">
      {p.title && <legend className="px-1 text-sm font-semibold">{p.title}</legend>}
      <div className="flex flex-col gap-2">{p.items}</div>
      {p.canAdd && !p.disabled && !p.readonly && (
        <button type="button" className="btn-quiet mt-2" onClick={p.onAddClick}>
          Add a row
        </button>
      )}
    </fieldset>
  );
}

/** A Likert item (codes 1–5) as a row of radio buttons, with "not answered". */
function LikertWidget(p: WidgetProps) {
  const opts = (p.schema.oneOf as { const?: number | null; title?: string }[] | undefined)?.filter((o) => o.const !== undefined && o.const !== null) ?? [];
  const codes = opts.length ? opts : [1, 2, 3, 4, 5].map((c) => ({ const: c, title: String(c) }));
  return (
    <div role="radiogroup" aria-labelledby={`${p.id}-label`} className="flex flex-wrap gap-3">
      <span id={`${p.id}-label`} className="sr-only">{p.label}</span>
      {codes.map((o) => (
        <label key={String(o.const)} className="flex items-center gap-1 font-normal">
          <input type="radio" name={p.id} checked={p.value === o.const} disabled={p.disabled || p.readonly} onChange={() => p.onChange(o.const)} />
          {o.title ?? o.const}
        </label>
      ))}
      <label className="flex items-center gap-1 font-normal text-ink-faint">
        <input type="radio" name={p.id} checked={p.value === null || p.value === undefined} disabled={p.disabled || p.readonly} onChange={() => p.onChange(null)} />
        not answered
      </label>
    </div>
  );
}

const JOINT_COLUMNS = [
  ['mcp_flexion', 'MCP flex'],
  ['pip_flexion', 'PIP flex'],
  ['dip_flexion', 'DIP flex'],
  ['mcp_ext_deficit', 'MCP ext. deficit'],
  ['pip_ext_deficit', 'PIP ext. deficit'],
  ['dip_ext_deficit', 'DIP ext. deficit'],
] as const;
const HANDS = ['right', 'left'] as const;
const FINGERS = ['index', 'middle', 'ring', 'little'] as const;

type JointRow = { hand: string; finger: string } & Partial<Record<(typeof JOINT_COLUMNS)[number][0], number>>;

/** Goniometry as one compact grid: fingers of both hands × joints, degrees. */
function JointGridField(p: FieldProps) {
  const rows = (Array.isArray(p.formData) ? p.formData : []) as JointRow[];
  const ctx = p.registry.formContext as CrfFormContext;
  const base = p.fieldPathId?.path ?? [];
  const find = (hand: string, finger: string) => rows.findIndex((r) => r.hand === hand && r.finger === finger);
  const set = (hand: string, finger: string, col: string, raw: string) => {
    const next = rows.map((r) => ({ ...r }));
    let i = find(hand, finger);
    if (i < 0 && raw === '') return;
    if (i < 0) {
      next.push({ hand, finger });
      i = next.length - 1;
    }
    const row = next[i] as Record<string, unknown>;
    if (raw === '') delete row[col];
    else row[col] = Number(raw);
    p.onChange(next, base);
  };
  const errs = p.errorSchema as Record<string, { [k: string]: { __errors?: string[] } }> | undefined;
  return (
    <fieldset className="mb-3 rounded border border-line p-3">
      <legend className="px-1 text-sm font-semibold">{p.schema.title ?? 'Active range of motion'} (degrees)</legend>
      <p className="mb-2 text-xs text-ink-soft">Active flexion and extension deficit per joint. A negative deficit is hyperextension. Leave fingers that were not measured empty.</p>
      <div className="overflow-x-auto">
        <table className="text-xs">
          <thead>
            <tr>
              <th scope="col">Hand</th>
              <th scope="col">Finger</th>
              {JOINT_COLUMNS.map(([k, l]) => <th key={k} scope="col">{l}</th>)}
            </tr>
          </thead>
          <tbody>
            {HANDS.flatMap((hand) =>
              FINGERS.map((finger) => {
                const i = find(hand, finger);
                const row = i >= 0 ? rows[i] : undefined;
                return (
                  <tr key={`${hand}-${finger}`}>
                    <td>{hand}</td>
                    <th scope="row" className="font-normal">{finger}</th>
                    {JOINT_COLUMNS.map(([k, l]) => {
                      const err = i >= 0 ? errs?.[String(i)]?.[k]?.__errors : undefined;
                      const id = `${p.fieldPathId?.$id ?? 'grid'}-${hand}-${finger}-${k}`;
                      return (
                        <td key={k} className={err ? 'bg-danger-tint' : ''}>
                          <input
                            id={id}
                            aria-label={`${hand} ${finger} ${l} (degrees)`}
                            type="number"
                            inputMode="numeric"
                            className="w-16 px-1 py-0.5 text-right"
                            value={row?.[k] ?? ''}
                            disabled={p.disabled || p.readonly}
                            onChange={(e) => set(hand, finger, k, e.target.value)}
                          />
                          {err && <span className="block text-danger">{err.join(' ')}</span>}
                          {ctx.recordId !== null && i >= 0 && row?.[k] !== undefined && (
                            <button type="button" className="block text-[10px] text-ink-faint underline" onClick={() => ctx.openHistory(`${pointerOf(base)}/${i}/${k}`)} aria-label={`History of ${hand} ${finger} ${l}`}>
                              history
                            </button>
                          )}
                        </td>
                      );
                    })}
                  </tr>
                );
              }),
            )}
          </tbody>
        </table>
      </div>
    </fieldset>
  );
}

/** Uploads a signed form (PDF, PNG or JPEG, checked on the server from its bytes) and keeps its reference as the item's value. */
function UploadWidget(p: WidgetProps) {
  const ctx = p.registry.formContext as CrfFormContext;
  const [state, setState] = useState<{ busy: boolean; error: string | null }>({ busy: false, error: null });
  async function pick(e: React.ChangeEvent<HTMLInputElement>) {
    const file = e.target.files?.[0];
    if (!file || !ctx.uploadUrl) return;
    setState({ busy: true, error: null });
    const r = await fetch(ctx.uploadUrl, { method: 'POST', body: file, headers: { 'content-type': 'application/octet-stream' } });
    const body = await r.json().catch(() => null);
    if (r.ok) {
      p.onChange(body.id);
      setState({ busy: false, error: null });
    } else setState({ busy: false, error: body?.error?.message ?? `Upload failed (${r.status}).` });
  }
  return (
    <div className="flex flex-col gap-1">
      <input id={p.id} type="file" accept="application/pdf,image/png,image/jpeg" disabled={p.disabled || p.readonly || state.busy} onChange={pick} aria-describedby={`${p.id}-ref`} />
      <span id={`${p.id}-ref`} className="text-xs text-ink-soft">{state.busy ? 'Uploading…' : p.value ? `Stored as ${p.value}` : 'No file yet (PDF, PNG or JPEG, at most 10 MB).'}</span>
      {state.error && <span role="alert" className="field-error">{state.error}</span>}
    </div>
  );
}

export const crfWidgets: RegistryWidgetsType = { 'ex:likert': LikertWidget, 'ex:upload': UploadWidget };
export const crfFields: RegistryFieldsType = { 'ex:joint-grid': JointGridField };
export const crfTemplates: Partial<TemplatesType> = { FieldTemplate, ObjectFieldTemplate, ArrayFieldTemplate } as Partial<TemplatesType>;
