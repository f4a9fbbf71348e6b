/**
 * Sample-size planning for a two-arm trial with equal arms: two means (as R's power.t.test) or two proportions
 * (as R's power.prop.test), with an optional inflation for expected loss to follow-up. Pure.
 */
import { sampleSizeTwoMeans, sampleSizeTwoProportions } from '@/lib/stats';
import type { SampleSizeBody } from '@/lib/schemas';

/** Shown with every result: a calculation is an aid to planning, not a protocol decision. */
export const PLANNING_CAUTION =
  'A planning aid, not a protocol decision: the result is only as good as the assumed difference, standard deviation or proportions. ' +
  'Base them on published data or a pilot, check them with the trial statistician, and state the calculation in the protocol.';

export interface SampleSizePlan {
  kind: SampleSizeBody['kind'];
  /** The settings used, defaults filled in. */
  inputs: Record<string, number | string>;
  /** The exact (non-integer) number per group solving the power equation, as R reports n. */
  n: number;
  /** Participants per group: n rounded up. */
  perGroup: number;
  /** Both groups. */
  total: number;
  /** perGroup / (1 − dropout), rounded up, when a dropout was given. */
  withDropout: { dropout: number; perGroup: number; total: number } | null;
  method: string;
  caution: string;
}

/** Computes a sample-size plan from a validated body; throws InvalidInputError (400) when no plan is possible. */
export function planSampleSize(body: SampleSizeBody): SampleSizePlan {
  const alpha = body.alpha ?? 0.05;
  const power = body.power ?? 0.8;
  const alternative = body.alternative ?? 'two-sided';
  const r =
    body.kind === 'two_means'
      ? sampleSizeTwoMeans({ delta: body.delta, sd: body.sd, alpha, power, alternative })
      : sampleSizeTwoProportions({ p1: body.p1, p2: body.p2, alpha, power, alternative });
  const inputs: Record<string, number | string> =
    body.kind === 'two_means' ? { delta: body.delta, sd: body.sd, alpha, power, alternative } : { p1: body.p1, p2: body.p2, alpha, power, alternative };
  let withDropout: SampleSizePlan['withDropout'] = null;
  if (body.dropout !== undefined && body.dropout > 0) {
    // Round up after inflating; 1e-9 keeps an exact quotient such as 80 / 0.8 from rounding up to 101.
    const perGroup = Math.ceil(r.perGroup / (1 - body.dropout) - 1e-9);
    withDropout = { dropout: body.dropout, perGroup, total: 2 * perGroup };
    inputs.dropout = body.dropout;
  }
  return {
    kind: body.kind,
    inputs,
    n: r.n,
    perGroup: r.perGroup,
    total: 2 * r.perGroup,
    withDropout,
    method:
      body.kind === 'two_means'
        ? 'Two-sample t test with equal groups (noncentral t, as R power.t.test with strict = FALSE)'
        : 'Two proportions, normal approximation without continuity correction (as R power.prop.test with strict = FALSE)',
    caution: PLANNING_CAUTION,
  };
}
