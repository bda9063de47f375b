/**
 * Step-to-position transfer: a position oscillation of amplitude A at frequency f, sampled every
 * Δt, gives one-frame steps of amplitude 2|sin(πfΔt)|·A (the difference filter x_n − x_{n−1}).
 * The same for every alias of f, since |sin(πfΔt)| has period 1/Δt. O(1).
 *
 * @param frequencyHz f, Hz
 * @param frameIntervalS Δt, s
 * @example
 * stepTransfer(25, 0.01); // → 2·sin(π/4) = 1.414…
 */
export function stepTransfer(frequencyHz: number, frameIntervalS: number): number {
  return 2 * Math.abs(Math.sin(Math.PI * frequencyHz * frameIntervalS));
}

/**
 * Exposure averaging: a camera integrating over τ_e sees an oscillation at f scaled by
 * |sinc(πfτ_e)| = |sin(πfτ_e)/(πfτ_e)| (estimators.md §10: A_eff = A·|sin(ωτ_e/2)/(ωτ_e/2)|).
 * It is zero at every multiple of 1/τ_e: such vibrations are invisible. O(1).
 *
 * @param frequencyHz f, Hz (the true frequency, not the alias)
 * @param exposureS τ_e, s (0: instantaneous sampling, factor 1)
 * @example
 * exposureTransfer(50, 0.01); // → sin(π/2)/(π/2) = 0.6366…
 */
export function exposureTransfer(frequencyHz: number, exposureS: number): number {
  const x = Math.PI * frequencyHz * exposureS;
  if (Math.abs(x) < 1e-8) return 1;
  return Math.abs(Math.sin(x) / x);
}
