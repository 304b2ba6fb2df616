/** Minimal typings for the parts of jStat (https://github.com/jstat/jstat, MIT) that shared/stats uses. */
declare module 'jstat' {
  interface JStatStatic {
    ibeta(x: number, a: number, b: number): number;
    lowRegGamma(a: number, x: number): number;
    normal: { cdf(x: number, mean: number, sd: number): number; inv(p: number, mean: number, sd: number): number };
    studentt: { cdf(x: number, dof: number): number; inv(p: number, dof: number): number };
    centralF: { cdf(x: number, d1: number, d2: number): number };
    chisquare: { cdf(x: number, dof: number): number };
  }
  const jStat: JStatStatic;
  export default jStat;
}
