/**
 * Distribution functions used by the tests and by sample-size planning.
 *
 * Normal, chi-square and F quantiles come straight from jstat, whose accuracy there is adequate
 * (normal about 1e-15, chi-square about 1e-10, F about 1e-8 absolute). The Student t and noncentral t
 * distributions are computed here instead: jstat's log-gamma has a relative error of about 2e-10 and its
 * incomplete-beta continued fraction stops at a relative change of 3e-7, so `jStat.studentt.cdf`,
 * `jStat.studentt.inv` and `jStat.noncentralt.cdf` are only good to roughly 1e-9 (t quantiles to 1e-8).
 * That is enough for printed p-values but not for reproducing R's root-found sample sizes and
 * confidence limits to the digits R prints, so the incomplete beta is evaluated here to full double
 * precision, with jstat's more accurate `loggam` for small arguments and a Stirling series for large ones.
 */
import { jStat } from 'jstat';
import { InvalidInputError } from './errors';
import { requireFinite, requireOpenUnit, requirePositive } from './validate';

// jstat's accurate log-gamma (`loggam`) is not named in the shared type declarations; this narrow cast
// reaches it without widening the declarations for the rest of the code base.
const jStatExtra = jStat as unknown as { loggam(x: number): number };

const LN_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);

// ---------------------------------------------------------------------------
// Gamma and beta functions
// ---------------------------------------------------------------------------

/**
 * Stirling-series remainder δ(x) = lnΓ(x) − ((x − ½)ln x − x + ½ln 2π), for x ≥ 10.
 * Eight terms of the Bernoulli series; at x = 10 the first omitted term is below 1e-17.
 */
function lnGammaCorrection(x: number): number {
  const x2 = 1 / (x * x);
  // Coefficients B_2k / (2k(2k − 1)), k = 1..8, evaluated by Horner's rule in 1/x².
  return (
    (1 / 12 +
      x2 *
        (-1 / 360 +
          x2 *
            (1 / 1260 +
              x2 * (-1 / 1680 + x2 * (1 / 1188 + x2 * (-691 / 360360 + x2 * (1 / 156 + x2 * (-3617 / 122400)))))))) /
    x
  );
}

/** Natural log of the gamma function for x > 0. */
export function lnGamma(x: number): number {
  if (x >= 10) return (x - 0.5) * Math.log(x) - x + LN_SQRT_2PI + lnGammaCorrection(x);
  return jStatExtra.loggam(x);
}

/**
 * ln B(a, b) for a, b > 0. For large arguments lnΓ(a) + lnΓ(b) − lnΓ(a + b) would cancel most of its
 * digits, so the Stirling parts are combined algebraically first and only the small remainders added.
 */
export function lnBeta(a: number, b: number): number {
  const p = Math.min(a, b);
  const q = Math.max(a, b);
  if (p >= 10) {
    const corr = lnGammaCorrection(p) + lnGammaCorrection(q) - lnGammaCorrection(p + q);
    return -0.5 * Math.log(q) + LN_SQRT_2PI + corr + (p - 0.5) * Math.log(p / (p + q)) + q * Math.log1p(-p / (p + q));
  }
  if (q >= 10) {
    const corr = lnGammaCorrection(q) - lnGammaCorrection(p + q);
    return lnGamma(p) + corr + p - p * Math.log(p + q) + (q - 0.5) * Math.log1p(-p / (p + q));
  }
  return lnGamma(p) + lnGamma(q) - lnGamma(p + q);
}

/** Continued fraction for the incomplete beta (modified Lentz), converged to double precision. */
function betaContinuedFraction(x: number, a: number, b: number): number {
  const tiny = 1e-300;
  const qab = a + b;
  const qap = a + 1;
  const qam = a - 1;
  let c = 1;
  let d = 1 - (qab * x) / qap;
  if (Math.abs(d) < tiny) d = tiny;
  d = 1 / d;
  let h = d;
  for (let m = 1; m <= 100000; m++) {
    const m2 = 2 * m;
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    h *= d * c;
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2));
    d = 1 + aa * d;
    if (Math.abs(d) < tiny) d = tiny;
    c = 1 + aa / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const del = d * c;
    h *= del;
    if (Math.abs(del - 1) < 1e-16) return h;
  }
  // Only reachable for parameters far outside anything a study produces (about 1e10 degrees of freedom).
  throw new Error('The incomplete beta function did not converge.');
}

/**
 * Regularised incomplete beta I_x(a, b). `xc` must be 1 − x; passing it separately keeps full relative
 * precision when x is within rounding of 1 (for example x = df / (df + t²) with small t²).
 */
export function regIncBeta(x: number, a: number, b: number, xc: number = 1 - x): number {
  if (x <= 0) return 0;
  if (xc <= 0) return 1;
  const lnX = x < 0.5 ? Math.log(x) : Math.log1p(-xc);
  const lnXc = xc < 0.5 ? Math.log(xc) : Math.log1p(-x);
  const lnFront = a * lnX + b * lnXc - lnBeta(a, b);
  // The continued fraction converges quickly only below the mean of the beta distribution; above it,
  // evaluate the complement I_{1−x}(b, a) instead.
  if (x < (a + 1) / (a + b + 2)) return (Math.exp(lnFront) * betaContinuedFraction(x, a, b)) / a;
  return 1 - (Math.exp(lnFront) * betaContinuedFraction(xc, b, a)) / b;
}

// ---------------------------------------------------------------------------
// Normal distribution
// ---------------------------------------------------------------------------

/** Upper tail Q(z) = 1 − Φ(z) for z ≥ 3, by the continued fraction for Mills' ratio (full relative precision). */
function normalUpperTailFar(z: number): number {
  const tiny = 1e-300;
  let f = z;
  let c = f;
  let d = 0;
  for (let k = 1; k <= 1000; k++) {
    d = z + k * d;
    if (d === 0) d = tiny;
    c = z + k / c;
    if (c === 0) c = tiny;
    d = 1 / d;
    const del = c * d;
    f *= del;
    if (Math.abs(del - 1) < 1e-16) break;
  }
  return Math.exp(-0.5 * z * z - LN_SQRT_2PI) / f;
}

/** Standard normal CDF Φ(z), accurate in relative terms far into both tails. */
export function normalCdf(z: number): number {
  requireFinite(z, 'z');
  // jStat.normal.cdf computes 0.5·(1 + erf(z/√2)), which loses relative precision in the lower tail
  // (it returns 0 below z ≈ −8.3); beyond |z| = 3 use the continued fraction instead.
  if (z <= -3) return normalUpperTailFar(-z);
  if (z >= 3) return 1 - normalUpperTailFar(z);
  return jStat.normal.cdf(z, 0, 1);
}

/** Standard normal upper tail 1 − Φ(z), accurate in relative terms. */
export function normalUpperTail(z: number): number {
  return normalCdf(-z);
}

/** Standard normal quantile Φ⁻¹(p), 0 < p < 1 (jstat, accurate to about 1e-15). */
export function normalQuantile(p: number): number {
  requireOpenUnit(p, 'The probability p');
  return jStat.normal.inv(p, 0, 1);
}

// ---------------------------------------------------------------------------
// Student t distribution
// ---------------------------------------------------------------------------

/** P(T > |t|) for Student t with df degrees of freedom: ½ I_{df/(df+t²)}(df/2, ½). */
function tTail(t: number, df: number): number {
  const t2 = t * t;
  if (!Number.isFinite(t2)) return 0;
  return 0.5 * regIncBeta(df / (df + t2), df / 2, 0.5, t2 / (df + t2));
}

/** Student t CDF P(T ≤ t), df > 0 (non-integer df allowed, as Welch's test needs). */
export function studentTCdf(t: number, df: number): number {
  if (Number.isNaN(t)) throw new InvalidInputError('t must be a number (got NaN).');
  requirePositive(df, 'The degrees of freedom');
  // Evaluate the smaller tail directly so small p-values keep their relative precision.
  return t < 0 ? tTail(t, df) : 1 - tTail(t, df);
}

/** Student t upper tail P(T > t). */
export function studentTUpperTail(t: number, df: number): number {
  return studentTCdf(-t, df);
}

function tPdf(t: number, df: number): number {
  return Math.exp(-0.5 * Math.log(df) - lnBeta(0.5, df / 2) - ((df + 1) / 2) * Math.log1p((t * t) / df));
}

/**
 * The t value with upper-tail probability q (0 < q ≤ ½), i.e. qt(q, df, lower.tail = FALSE).
 * jstat's inverse is only good to about 1e-8, so it is used as the starting point for Newton's method
 * on the accurate tail; two or three steps reach full precision.
 */
function tUpperQuantile(q: number, df: number): number {
  if (q === 0.5) return 0;
  let x = -jStat.studentt.inv(q, df);
  if (!Number.isFinite(x) || x <= 0) x = -normalQuantile(q);
  for (let i = 0; i < 50; i++) {
    const step = (tTail(x, df) - q) / tPdf(x, df);
    const next = x + step;
    // A step cannot cross zero for q < ½; halving keeps Newton inside the valid region.
    x = next > 0 ? next : x / 2;
    if (Math.abs(step) <= 1e-15 * Math.abs(x)) break;
  }
  return x;
}

/** Student t quantile: the t with P(T ≤ t) = p, 0 < p < 1, df > 0. */
export function studentTQuantile(p: number, df: number): number {
  requireOpenUnit(p, 'The probability p');
  requirePositive(df, 'The degrees of freedom');
  return p < 0.5 ? -tUpperQuantile(p, df) : tUpperQuantile(1 - p, df);
}

// ---------------------------------------------------------------------------
// Noncentral t distribution
// ---------------------------------------------------------------------------

/**
 * Lower and upper tails of the noncentral t at t ≥ 0 by the Poisson mixture
 *   F(t; ν, δ) = Φ(−δ) + ½ Σ_j [ p_j I_y(j + ½, ν/2) + q_j I_y(j + 1, ν/2) ],  y = t²/(t² + ν),
 *   p_j = e^{−λ} λ^j / j!,  q_j = δ e^{−λ} λ^j / (√2 Γ(j + 3/2)),  λ = δ²/2.
 * The weights are formed in logs and summed outward from the Poisson mode, so the series neither
 * underflows for large δ (where e^{−λ} alone is 0) nor stops before reaching the mode.
 */
function noncentralTTailsNonNegative(t: number, df: number, ncp: number): { lower: number; upper: number } {
  const lambda = (ncp * ncp) / 2;
  const t2 = t * t;
  const y = t2 / (t2 + df);
  const yc = df / (t2 + df);
  const lnLambda = lambda > 0 ? Math.log(lambda) : -Infinity;
  const lnQ0 = ncp === 0 ? -Infinity : Math.log(Math.abs(ncp)) - 0.5 * Math.LN2;
  const sign = ncp < 0 ? -1 : 1;
  const term = (j: number): { value: number; weight: number } => {
    const lnPow = j === 0 ? 0 : j * lnLambda;
    const p = Math.exp(-lambda + lnPow - lnGamma(j + 1));
    const q = Math.exp(-lambda + lnPow + lnQ0 - lnGamma(j + 1.5));
    const value = p * regIncBeta(y, j + 0.5, df / 2, yc) + sign * q * regIncBeta(y, j + 1, df / 2, yc);
    return { value, weight: p + q };
  };
  const mode = Math.floor(lambda);
  let sum = 0;
  for (let j = mode; j < mode + 100000; j++) {
    const { value, weight } = term(j);
    sum += value;
    if (weight < 1e-18 && j > mode) break;
  }
  for (let j = mode - 1; j >= 0; j--) {
    const { value, weight } = term(j);
    sum += value;
    if (weight < 1e-18) break;
  }
  const lower = normalCdf(-ncp) + 0.5 * sum;
  const upper = normalCdf(ncp) - 0.5 * sum;
  return { lower: Math.min(1, Math.max(0, lower)), upper: Math.min(1, Math.max(0, upper)) };
}

/** Noncentral t CDF P(T ≤ t) with df > 0 and noncentrality ncp (upper = true gives P(T > t)). */
export function noncentralTCdf(t: number, df: number, ncp: number, upper = false): number {
  if (Number.isNaN(t)) throw new InvalidInputError('t must be a number (got NaN).');
  requirePositive(df, 'The degrees of freedom');
  requireFinite(ncp, 'The noncentrality parameter');
  if (t === Infinity) return upper ? 0 : 1;
  if (t === -Infinity) return upper ? 1 : 0;
  if (t >= 0) {
    const tails = noncentralTTailsNonNegative(t, df, ncp);
    return upper ? tails.upper : tails.lower;
  }
  // P(T ≤ t; δ) = P(T ≥ −t; −δ) for t < 0.
  const tails = noncentralTTailsNonNegative(-t, df, -ncp);
  return upper ? tails.lower : tails.upper;
}

// ---------------------------------------------------------------------------
// Chi-square and F
// ---------------------------------------------------------------------------

/** Chi-square quantile: the x with P(X ≤ x) = p for df > 0 (jstat, accurate to about 1e-10). */
export function chiSquareQuantile(p: number, df: number): number {
  requireOpenUnit(p, 'The probability p');
  requirePositive(df, 'The degrees of freedom');
  return jStat.chisquare.inv(p, df);
}

/** Chi-square upper tail P(X > x) on 1 degree of freedom, 2·Q(√x), without the underflow of 1 − CDF. */
export function chiSquare1UpperTail(x: number): number {
  requireFinite(x, 'The chi-square statistic');
  if (x <= 0) return 1;
  return 2 * normalUpperTail(Math.sqrt(x));
}

/** F quantile: the x with P(F ≤ x) = p for df1, df2 > 0 (jstat, accurate to about 1e-8). */
export function fQuantile(p: number, df1: number, df2: number): number {
  requireOpenUnit(p, 'The probability p');
  requirePositive(df1, 'The numerator degrees of freedom');
  requirePositive(df2, 'The denominator degrees of freedom');
  return jStat.centralF.inv(p, df1, df2);
}
