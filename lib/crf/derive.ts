import type { CompiledForm } from './definitions';
import { decideEligibility } from '@/lib/screening/eligibility';
import { deriveFollowUp } from './follow-up';

/** What a derivation may read besides the form itself: the participant's injury and operation record. */
export type DeriveContext = { operation?: Record<string, unknown> | null };

/** A derivation hook: computes a form's derived items from the entered ones. Pure; throws InvalidInputError on bad input. */
export type Derivation = (entered: Record<string, unknown>, ctx: DeriveContext) => Record<string, unknown>;

const hooks = new Map<string, Derivation>();

/** Registers the derivation of a form (one per form key). */
export function registerDerivation(formKey: string, fn: Derivation): void {
  hooks.set(formKey, fn);
}

/** Runs a form's derivation and keeps only the items the definition declares as derived. */
export function derive(def: CompiledForm, entered: Record<string, unknown>, ctx: DeriveContext = {}): Record<string, unknown> {
  const fn = hooks.get(def.key);
  if (!fn || def.derivedKeys.length === 0) return {};
  const out = fn(entered, ctx);
  const kept: Record<string, unknown> = {};
  for (const k of def.derivedKeys) if (out[k] !== undefined) kept[k] = out[k];
  return kept;
}

// The operation form counts the injured fingers (used for stratification: 1 or 2+).
registerDerivation('operation', (d) => (Array.isArray(d.fingers) ? { n_injured_fingers: d.fingers.length } : {}));

// The eligibility form shows the server's decision (Y/N); the reasons go to the screening log.
registerDerivation('eligibility', (d) => ({ eligible: decideEligibility(d).eligible ? 'Y' : 'N' }));

// Follow-up: TAM, % of the other hand and grade per injured finger, QuickDASH and grip ratio.
registerDerivation('follow_up', (d, ctx) => ({ derived_scores: deriveFollowUp(d, ctx.operation ?? null) }));
