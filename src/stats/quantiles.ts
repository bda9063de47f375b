import jStatModule from 'jstat';

// jstat is CommonJS; its default export is the jStat object itself, or carries it as `.jStat`.
const jStat = ((jStatModule as unknown as { jStat?: unknown }).jStat ?? jStatModule) as typeof import('jstat').jStat;

/** Standard normal quantile z_p. @example normalQuantile(0.975) // → 1.959963984540054 */
export function normalQuantile(p: number): number {
  return jStat.normal.inv(p, 0, 1);
}

/** Standard normal upper tail P(Z > z). */
export function normalUpperTail(z: number): number {
  return 1 - jStat.normal.cdf(z, 0, 1);
}

/** Student t quantile with `df` degrees of freedom. @example studentTQuantile(0.975, 10) // → 2.228 */
export function studentTQuantile(p: number, df: number): number {
  return jStat.studentt.inv(p, df);
}

/** Chi-square quantile. @example chiSquareQuantile(0.95, 2) // → 5.991 */
export function chiSquareQuantile(p: number, df: number): number {
  return jStat.chisquare.inv(p, df);
}

/** Chi-square upper tail P(X > x). */
export function chiSquareUpperTail(x: number, df: number): number {
  return 1 - jStat.chisquare.cdf(x, df);
}

/** F-distribution quantile F⁻¹(p; df1, df2). */
export function fQuantile(p: number, df1: number, df2: number): number {
  return jStat.centralF.inv(p, df1, df2);
}

/** F-distribution upper tail P(F > f). */
export function fUpperTail(f: number, df1: number, df2: number): number {
  return 1 - jStat.centralF.cdf(f, df1, df2);
}

/** Beta quantile. */
export function betaQuantile(p: number, a: number, b: number): number {
  return jStat.beta.inv(p, a, b);
}

/** ln Γ(x). */
export function logGamma(x: number): number {
  return jStat.gammaln(x);
}

/**
 * Clopper–Pearson exact two-sided 95 % (by default) interval for a binomial proportion
 * (Clopper & Pearson 1934, Biometrika 26:404).
 *
 * @example clopperPearson(475, 500) // → [0.9273…, 0.9677…]
 */
export function clopperPearson(successes: number, trials: number, level = 0.95): [number, number] {
  if (!(trials > 0) || successes < 0 || successes > trials) {
    throw new RangeError('clopperPearson requires 0 <= successes <= trials and trials > 0');
  }
  const tail = (1 - level) / 2;
  const low = successes === 0 ? 0 : jStat.beta.inv(tail, successes, trials - successes + 1);
  const high = successes === trials ? 1 : jStat.beta.inv(1 - tail, successes + 1, trials - successes);
  return [low, high];
}
