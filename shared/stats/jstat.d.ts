/** The part of jStat (https://github.com/jstat/jstat, ships no type declarations) that distributions.ts uses. */
declare module 'jstat' {
  const jStat: {
    ibeta(x: number, a: number, b: number): number;
    lowRegGamma(a: number, x: number): number;
    normal: { cdf(x: number, mean: number, sd: number): number };
    studentt: { inv(p: number, dof: number): number };
  };
  export default jStat;
}
