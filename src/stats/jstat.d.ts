// Minimal ambient types for the parts of jstat that jostle uses (jstat ships no types).
declare module 'jstat' {
  interface ContinuousDistribution {
    pdf(x: number, ...params: number[]): number;
    cdf(x: number, ...params: number[]): number;
    inv(p: number, ...params: number[]): number;
  }
  export const jStat: {
    normal: ContinuousDistribution;
    studentt: ContinuousDistribution;
    chisquare: ContinuousDistribution;
    centralF: ContinuousDistribution;
    beta: ContinuousDistribution;
    gamma: ContinuousDistribution;
    gammaln(x: number): number;
    ibeta(x: number, a: number, b: number): number;
    ibetainv(p: number, a: number, b: number): number;
    lowRegGamma(a: number, x: number): number;
    gammapinv(p: number, a: number): number;
  };
  export default jStat;
}
