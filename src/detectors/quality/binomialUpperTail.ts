import jStatModule from 'jstat';

// jstat is CommonJS; its default export is the jStat object itself, or carries it as `.jStat`.
const jStat = ((jStatModule as unknown as { jStat?: unknown }).jStat ?? jStatModule) as typeof import('jstat').jStat;

/**
 * Exact binomial upper tail P(X ≥ k) for X ~ Binomial(n, p), through the regularized incomplete
 * beta function: P(X ≥ k) = I_p(k, n − k + 1) (e.g. Abramowitz & Stegun 1964, 26.5.24). O(1)
 * (a continued fraction inside jstat).
 *
 * @example
 * binomialUpperTail(3, 10, 0.5); // → 0.9453
 */
export function binomialUpperTail(k: number, n: number, p: number): number {
  if (k <= 0) return 1;
  if (k > n) return 0;
  if (p <= 0) return 0;
  if (p >= 1) return 1;
  return jStat.ibeta(p, k, n - k + 1);
}
