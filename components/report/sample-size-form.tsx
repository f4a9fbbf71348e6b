'use client';
import { useState } from 'react';
import { postJson, type ApiError } from '@/components/fetcher';

type Plan = {
  kind: 'two_means' | 'two_proportions';
  inputs: Record<string, number | string>;
  n: number;
  perGroup: number;
  total: number;
  withDropout: { dropout: number; perGroup: number; total: number } | null;
  method: string;
  caution: string;
};

type Kind = Plan['kind'];
const FIELDS: Record<Kind, { key: string; label: string; hint: string; initial: string }[]> = {
  two_means: [
    { key: 'delta', label: 'Difference to detect (delta)', hint: 'In the outcome’s unit, e.g. 10 percentage points of TAM.', initial: '10' },
    { key: 'sd', label: 'Standard deviation (sd)', hint: 'Expected SD of the outcome in each arm.', initial: '20' },
  ],
  two_proportions: [
    { key: 'p1', label: 'Proportion in arm 1 (p1)', hint: 'Between 0 and 1, e.g. 0.05 for 5 %.', initial: '0.5' },
    { key: 'p2', label: 'Proportion in arm 2 (p2)', hint: 'Between 0 and 1.', initial: '0.75' },
  ],
};

/** Sample-size calculator: two means or two proportions; the server computes, the form shows n and the rounded n per group. */
export function SampleSizeForm({ url }: { url: string }) {
  const [kind, setKind] = useState<Kind>('two_means');
  const [values, setValues] = useState<Record<string, string>>(() =>
    Object.fromEntries([...FIELDS.two_means, ...FIELDS.two_proportions].map((f) => [f.key, f.initial])),
  );
  const [alpha, setAlpha] = useState('0.05');
  const [power, setPower] = useState('0.8');
  const [alternative, setAlternative] = useState<'two-sided' | 'one-sided'>('two-sided');
  const [dropout, setDropout] = useState('');
  const [plan, setPlan] = useState<Plan | null>(null);
  const [error, setError] = useState<ApiError | null>(null);
  const [busy, setBusy] = useState(false);

  // Numbers are sent as typed; an empty or non-numeric field is sent as text so the server names it.
  const asNumber = (s: string) => (s.trim() !== '' && Number.isFinite(Number(s)) ? Number(s) : s);

  async function submit(e: React.FormEvent) {
    e.preventDefault();
    setBusy(true);
    const body: Record<string, unknown> = { kind, alpha: asNumber(alpha), power: asNumber(power), alternative };
    for (const f of FIELDS[kind]) body[f.key] = asNumber(values[f.key] ?? '');
    if (dropout.trim() !== '') body.dropout = asNumber(dropout);
    const r = await postJson<Plan>(url, body);
    setBusy(false);
    if (r.ok) {
      setPlan(r.data);
      setError(null);
    } else {
      setPlan(null);
      setError(r.error);
    }
  }

  const fieldError = (k: string) => error?.fields?.[k];
  return (
    <div className="flex flex-col gap-4">
      <form onSubmit={submit} className="panel flex flex-col gap-3" noValidate aria-describedby="ss-help">
        <fieldset className="flex gap-4">
          <legend className="mb-1 text-sm font-semibold">Outcome</legend>
          {(['two_means', 'two_proportions'] as const).map((k) => (
            <label key={k} className="flex items-center gap-1 font-normal">
              <input type="radio" name="kind" value={k} checked={kind === k} onChange={() => { setKind(k); setPlan(null); setError(null); }} />
              {k === 'two_means' ? 'Two means (continuous outcome)' : 'Two proportions (binary outcome)'}
            </label>
          ))}
        </fieldset>
        <p id="ss-help" className="text-sm text-ink-soft">Two arms of equal size; the result is the number of participants with the outcome measured in each arm.</p>
        <div className="grid gap-3 md:grid-cols-2">
          {FIELDS[kind].map((f) => (
            <div key={f.key} className="flex flex-col gap-1">
              <label htmlFor={`ss-${f.key}`}>{f.label}</label>
              <input id={`ss-${f.key}`} inputMode="decimal" value={values[f.key] ?? ''} onChange={(e) => setValues({ ...values, [f.key]: e.target.value })} aria-invalid={!!fieldError(f.key)} aria-describedby={`ss-${f.key}-hint`} />
              <span id={`ss-${f.key}-hint`} className="text-xs text-ink-faint">{f.hint}</span>
              {fieldError(f.key) && <span className="field-error">{fieldError(f.key)}</span>}
            </div>
          ))}
          <div className="flex flex-col gap-1">
            <label htmlFor="ss-alpha">Significance level (alpha)</label>
            <input id="ss-alpha" inputMode="decimal" value={alpha} onChange={(e) => setAlpha(e.target.value)} aria-invalid={!!fieldError('alpha')} />
            {fieldError('alpha') && <span className="field-error">{fieldError('alpha')}</span>}
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="ss-power">Power</label>
            <input id="ss-power" inputMode="decimal" value={power} onChange={(e) => setPower(e.target.value)} aria-invalid={!!fieldError('power')} />
            {fieldError('power') && <span className="field-error">{fieldError('power')}</span>}
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="ss-alternative">Alternative</label>
            <select id="ss-alternative" value={alternative} onChange={(e) => setAlternative(e.target.value as 'two-sided' | 'one-sided')}>
              <option value="two-sided">Two-sided</option>
              <option value="one-sided">One-sided</option>
            </select>
          </div>
          <div className="flex flex-col gap-1">
            <label htmlFor="ss-dropout">Expected loss to follow-up (optional, 0–0.8)</label>
            <input id="ss-dropout" inputMode="decimal" value={dropout} onChange={(e) => setDropout(e.target.value)} placeholder="e.g. 0.1" aria-invalid={!!fieldError('dropout')} />
            {fieldError('dropout') && <span className="field-error">{fieldError('dropout')}</span>}
          </div>
        </div>
        <div><button type="submit" className="btn" disabled={busy}>{busy ? 'Calculating…' : 'Calculate'}</button></div>
        {error && <p role="alert" className="notice-error">{error.message}</p>}
      </form>
      {plan && (
        <section className="panel" aria-labelledby="ss-result-h" role="status">
          <h2 id="ss-result-h" className="mb-2">Result</h2>
          <dl className="grid grid-cols-[max-content_1fr] gap-x-4 gap-y-1">
            <dt className="font-semibold">n per group (exact, as R reports it)</dt>
            <dd data-testid="ss-n" className="tabular-nums">{plan.n.toFixed(4)}</dd>
            <dt className="font-semibold">Participants per group (rounded up)</dt>
            <dd data-testid="ss-per-group" className="tabular-nums">{plan.perGroup}</dd>
            <dt className="font-semibold">Both groups</dt>
            <dd data-testid="ss-total" className="tabular-nums">{plan.total}</dd>
            {plan.withDropout && (
              <>
                <dt className="font-semibold">To recruit per group, allowing {Math.round(plan.withDropout.dropout * 100)} % loss</dt>
                <dd data-testid="ss-dropout-per-group" className="tabular-nums">{plan.withDropout.perGroup} (total {plan.withDropout.total})</dd>
              </>
            )}
          </dl>
          <p className="mt-2 text-sm text-ink-soft">{plan.method}.</p>
          <p className="notice-warn mt-2">{plan.caution}</p>
        </section>
      )}
    </div>
  );
}
