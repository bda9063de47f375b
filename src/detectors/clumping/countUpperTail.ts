import jStatModule from 'jstat';

// jstat is CommonJS; its default export is the jStat object itself, or carries it as `.jStat`.
const jStat = ((jStatModule as unknown as { jStat?: unknown }).jStat ?? jStatModule) as typeof import('jstat').jStat;

/**
 * Upper tail P(X ≥ k) of a count, exact: Poisson with mean `mean` when `trials` is omitted,
 * P(X ≥ k) = P(k, μ) (regularized lower incomplete gamma), or Binomial(trials, mean) otherwise,
 * P(X ≥ k) = I_p(k, n − k + 1) (Abramowitz & Stegun 1964, 26.4.21 and 26.5.24). O(1).
 *
 * @param k observed count (≥ 0)
 * @param mean Poisson mean μ, or the binomial success probability p when `trials` is given
 * @param trials binomial n (optional)
 * @example
 * countUpperTail(1, 0.01);     // → 0.00995 (Poisson: 1 − e^{−0.01})
 * countUpperTail(3, 0.5, 10);  // → 0.9453 (binomial)
 */
export function countUpperTail(k: number, mean: number, trials?: number): number {
  if (k <= 0) return 1;
  if (trials !== undefined) {
    if (k > trials) return 0;
    if (mean <= 0) return 0;
    if (mean >= 1) return 1;
    return jStat.ibeta(mean, k, trials - k + 1);
  }
  if (mean <= 0) return 0;
  return jStat.lowRegGamma(k, mean);
}
