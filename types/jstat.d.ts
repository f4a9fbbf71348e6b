// jstat ships no type declarations; this names the parts Excursion uses.
declare module 'jstat' {
  interface Dist1 { cdf(x: number, a: number): number; inv(p: number, a: number): number; pdf(x: number, a: number): number }
  interface Dist2 { cdf(x: number, a: number, b: number): number; inv(p: number, a: number, b: number): number; pdf(x: number, a: number, b: number): number }
  interface JStatStatic {
    normal: Dist2;
    studentt: Dist1;
    chisquare: Dist1;
    centralF: Dist2;
    gamma: Dist2;
    beta: Dist2;
    binomial: { pdf(k: number, n: number, p: number): number; cdf(k: number, n: number, p: number): number };
    poisson: { pdf(k: number, l: number): number; cdf(k: number, l: number): number };
    noncentralt: { cdf(x: number, dof: number, ncp: number): number; pdf(x: number, dof: number, ncp: number): number };
    hypgeom: { pdf(k: number, N: number, m: number, n: number): number; cdf(k: number, N: number, m: number, n: number): number };
    ttest(...args: unknown[]): number;
    mean(a: number[]): number;
    median(a: number[]): number;
    stdev(a: number[], flag?: boolean): number;
    variance(a: number[], flag?: boolean): number;
    sum(a: number[]): number;
    gammaln(x: number): number;
    factorialln(n: number): number;
    combinationln(n: number, k: number): number;
    [key: string]: unknown;
  }
  export const jStat: JStatStatic;
  const _default: JStatStatic;
  export default _default;
}
