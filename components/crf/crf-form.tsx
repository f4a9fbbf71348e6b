'use client';
import { useMemo, useRef, useState } from 'react';
import useSWR from 'swr';
import Form from '@rjsf/core';
import { customizeValidator } from '@rjsf/validator-ajv8';
import type { ErrorSchema, RJSFSchema, UiSchema } from '@rjsf/utils';
import { getJson, sendJson, type ApiError } from '@/components/fetcher';
import { crfTemplates, crfWidgets, crfFields, type CrfFormContext } from './widgets';
import { ItemHistory } from './item-history';
import { DerivedPanel } from './derived-panel';
import { ItemQueries } from './item-queries';

// The browser checks times of day the way the server does (see lib/crf/ajv.ts).
const validator = customizeValidator({ customFormats: { time: /^([01]\d|2[0-3]):[0-5]\d(:[0-5]\d)?$/ } });

type Definition = { key: string; version: number; title: string; access: string; schema: RJSFSchema; ui: UiSchema };
type RecordView = { id: number; formVersion: number; status: string; data: Record<string, unknown>; derived: Record<string, unknown>; review: { ruleId: string; level: string; message: string; items: string[] }[]; lockVersion: number };
type Loaded = { record: RecordView | null; definition: Definition; canWrite: boolean };

const REASONS = [
  ['transcription_error', 'Transcription error'],
  ['late_information', 'Late information'],
  ['query_response', 'Response to a data query'],
  ['source_corrected', 'Source document corrected'],
  ['other', 'Other'],
] as const;

/** Turns `{ "/a/0/b": "message" }` into RJSF's nested error schema. */
function toErrorSchema(fields: Record<string, string> | undefined): ErrorSchema {
  const root: Record<string, unknown> = {};
  for (const [pointer, msg] of Object.entries(fields ?? {})) {
    const tokens = pointer.split('/').slice(1).map((t) => t.replace(/~1/g, '/').replace(/~0/g, '~'));
    let node = root;
    for (const t of tokens) node = (node[t] ??= {}) as Record<string, unknown>;
    ((node.__errors ??= []) as string[]).push(msg);
  }
  return root as ErrorSchema;
}

/** Fixed-length lists (three grip trials, the QuickDASH items) start with one empty slot per entry, nothing pre-filled. */
function blankArrays(schema: RJSFSchema): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries((schema.properties ?? {}) as Record<string, { type?: string; minItems?: number }>)) {
    if (v.type === 'array' && v.minItems && v.minItems > 0) out[k] = Array(v.minItems).fill(null);
  }
  return out;
}

/** Our own widget names in ui.json are mapped onto RJSF: `ex:joint-grid` is a field, the others widgets. */
function adaptUi(ui: unknown): UiSchema {
  if (Array.isArray(ui)) return ui.map(adaptUi) as unknown as UiSchema;
  if (!ui || typeof ui !== 'object') return ui as UiSchema;
  const out: Record<string, unknown> = {};
  for (const [k, v] of Object.entries(ui)) {
    if (k === 'ui:widget' && v === 'ex:joint-grid') out['ui:field'] = v;
    else out[k] = adaptUi(v);
  }
  return out as UiSchema;
}

/** A case report form: loads the definition the record was entered with, saves through the API. */
export function CrfForm({ url, auditUrl, uploadUrl, timeZone, queriesUrl, verifyUrl, canOpenQueries = false, canAnswerQueries = false }: { url: string; auditUrl: string; uploadUrl?: string; timeZone: string; queriesUrl?: string; verifyUrl?: string; canOpenQueries?: boolean; canAnswerQueries?: boolean }) {
  const { data, error, mutate } = useSWR<Loaded>(url, getJson, { revalidateOnFocus: false });
  // The form keeps its own state; the latest values are read from a ref, so typing never re-renders the form
  // from props (a controlled form could drop a change made between two renders).
  const latest = useRef<Record<string, unknown> | null>(null);
  const [serverError, setServerError] = useState<ApiError | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [reasonCode, setReasonCode] = useState<string>('');
  const [reasonText, setReasonText] = useState('');
  const [busy, setBusy] = useState(false);
  const [historyPath, setHistoryPath] = useState<string | null>(null);
  const formRef = useRef<Form>(null);

  const ui = useMemo(() => (data ? adaptUi(data.definition.ui) : {}), [data]);
  // Derived items are computed on the server and shown in their own read-only panel, not as inputs.
  const schema = useMemo(() => {
    if (!data) return {} as RJSFSchema;
    const props = { ...((data.definition.schema.properties ?? {}) as Record<string, { 'x-derived'?: boolean }>) };
    for (const k of Object.keys(props)) if (props[k]['x-derived']) delete props[k];
    return { ...data.definition.schema, properties: props } as RJSFSchema;
  }, [data]);
  if (error) return <p role="alert" className="notice-error">{error.message}</p>;
  if (!data) return <p className="text-sm text-ink-faint">Loading the form…</p>;

  const { definition, record, canWrite } = data;
  const initial = { ...blankArrays(schema), ...(record?.data ?? {}) };
  // On a re-render for another reason (an error shown, a reason chosen) the form keeps what was typed.
  const shown = latest.current ?? initial;
  const submitted = record?.status === 'submitted';
  const context: CrfFormContext = { recordId: record?.id ?? null, openHistory: setHistoryPath, uploadUrl };

  async function save(intent: 'draft' | 'submit') {
    setNotice(null);
    setServerError(null);
    if (submitted && !reasonCode) {
      setServerError({ code: 'validation_failed', message: 'This form was submitted: choose a reason for the change.' });
      return;
    }
    setBusy(true);
    // The form's committed state is what is sent: its change events can arrive in another order than the changes
    // when several are made in quick succession, so the last event alone may miss some of them.
    const committed = formRef.current?.state.formData as Record<string, unknown> | undefined;
    const r = await sendJson<RecordView>('PUT', url, {
      data: committed ?? latest.current ?? initial,
      intent,
      baseVersion: record?.lockVersion ?? null,
      ...(submitted ? { reason: { code: reasonCode, ...(reasonText ? { text: reasonText } : {}) } } : {}),
    });
    setBusy(false);
    if (r.ok) {
      setNotice(intent === 'submit' || submitted ? 'Saved and submitted.' : 'Draft saved.');
      setReasonCode('');
      setReasonText('');
      latest.current = null;
      await mutate();
    } else {
      setServerError(r.error);
      if (r.status === 409) {
        latest.current = null;
        await mutate();
      }
    }
  }

  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-center gap-3 text-sm">
        <span className="tag">form version {record?.formVersion ?? definition.version}</span>
        <span className="tag">{record ? record.status : 'not started'}</span>
        {definition.access === 'assessor' && <span className="tag">blinded outcome form</span>}
      </div>
      {notice && <p role="status" className="notice-ok">{notice}</p>}
      {serverError && (
        <div role="alert" className="notice-error">
          <p>{serverError.message}</p>
          {serverError.fields && (
            <ul className="ml-4 list-disc">
              {Object.entries(serverError.fields).map(([k, v]) => (
                <li key={k}><code className="font-mono text-xs">{k}</code>: {v}</li>
              ))}
            </ul>
          )}
        </div>
      )}
      {record && record.review.length > 0 && (
        <div className="notice-warn" role="note">
          <p className="font-semibold">Marked for review</p>
          <ul className="ml-4 list-disc">{record.review.map((v, i) => <li key={i}>{v.message}</li>)}</ul>
        </div>
      )}
      <div className="panel">
        <Form
          key={`${record?.id ?? 'new'}-${record?.lockVersion ?? 0}`}
          ref={formRef}
          schema={schema}
          uiSchema={{ ...ui, 'ui:order': (ui['ui:order'] as string[] | undefined)?.filter((k) => k in (schema.properties ?? {})), 'ui:submitButtonOptions': { norender: true } }}
          formData={shown}
          validator={validator}
          widgets={crfWidgets}
          fields={crfFields}
          templates={crfTemplates}
          formContext={context}
          extraErrors={toErrorSchema(serverError?.fields)}
          disabled={!canWrite || record?.status === 'voided'}
          noHtml5Validate
          // Nothing is pre-filled: an unanswered coded item stays unanswered.
          experimental_defaultFormStateBehavior={{ constAsDefaults: 'never', emptyObjectFields: 'skipDefaults' }}
          showErrorList={false}
          onChange={(e) => {
            latest.current = e.formData as Record<string, unknown>;
          }}
        />
      </div>
      {record && <DerivedPanel derived={record.derived} />}
      {canWrite && record?.status !== 'voided' && (
        <div className="panel flex flex-wrap items-end gap-3">
          {submitted && (
            <>
              <div className="flex flex-col gap-1">
                <label htmlFor="reason-code">Reason for the change</label>
                <select id="reason-code" value={reasonCode} onChange={(e) => setReasonCode(e.target.value)}>
                  <option value="">Choose…</option>
                  {REASONS.map(([v, l]) => <option key={v} value={v}>{l}</option>)}
                </select>
              </div>
              <div className="flex flex-col gap-1">
                <label htmlFor="reason-text">Details (optional)</label>
                <input id="reason-text" value={reasonText} maxLength={500} onChange={(e) => setReasonText(e.target.value)} />
              </div>
            </>
          )}
          {!submitted && (
            <button type="button" className="btn-quiet" disabled={busy} onClick={() => save('draft')}>
              Save draft
            </button>
          )}
          <button type="button" className="btn" disabled={busy} onClick={() => save('submit')}>
            {submitted ? 'Save change' : 'Submit form'}
          </button>
        </div>
      )}
      {historyPath && record && (
        <ItemHistory auditUrl={`${auditUrl}?record=${record.id}&item=${encodeURIComponent(historyPath)}`} path={historyPath} timeZone={timeZone} onClose={() => setHistoryPath(null)}>
          {queriesUrl && verifyUrl && <ItemQueries queriesUrl={queriesUrl} verifyUrl={verifyUrl} recordId={record.id} path={historyPath} canOpen={canOpenQueries} canAnswer={canAnswerQueries} />}
        </ItemHistory>
      )}
    </div>
  );
}
