// Minimal typings for the parts of jstat (test reference library) used by the stats tests.
declare module 'jstat' {
  interface Dist1 {
    cdf(x: number, a: number): number;
    inv(p: number, a: number): number;
  }
  interface JStat {
    normal: { cdf(x: number, mean: number, sd: number): number; inv(p: number, mean: number, sd: number): number };
    chisquare: Dist1;
    studentt: Dist1;
    centralF: { cdf(x: number, d1: number, d2: number): number; inv(p: number, d1: number, d2: number): number };
    gammaln(x: number): number;
    ibeta(x: number, a: number, b: number): number;
    lowRegGamma(a: number, x: number): number;
    quantiles(arr: number[], p: number[]): number[];
    variance(arr: number[], flag?: boolean): number;
    stdev(arr: number[], flag?: boolean): number;
    mean(arr: number[]): number;
  }
  const jStat: JStat;
  export default jStat;
}
