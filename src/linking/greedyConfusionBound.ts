/**
 * Probability that greedy nearest-neighbour linking picks the wrong detection, at crowding ξ:
 * P_NN = πξ / (1 + πξ) (detectors.md §5, derived and checked by simulation there).
 *
 * Derivation: with other detections a Poisson field of density ρ and a 2-D Gaussian true step
 * whose squared length s² is exponential with mean ⟨s²⟩, the chance that no other detection is
 * closer than the true one is E[exp(−ρπs²)] = 1/(1 + πρ⟨s²⟩).
 *
 * An optimal (global assignment) linker should stay below this bound at every ξ.
 *
 * Bad-input policy: returns `undefined` when ξ is not a finite number ≥ 0.
 *
 * Complexity O(1).
 *
 * @param crowdingParameter ξ = ρ⟨s²⟩, dimensionless (see {@link crowding}).
 * @returns confusion probability in [0, 1).
 *
 * @example
 * greedyConfusionBound(0.1);  // → 0.2391 (π·0.1 / (1 + π·0.1))
 * greedyConfusionBound(0);    // → 0
 */
export function greedyConfusionBound(crowdingParameter: number): number | undefined {
  if (!(crowdingParameter >= 0) || crowdingParameter === Infinity) return undefined;
  const swept = Math.PI * crowdingParameter;
  return swept / (1 + swept);
}
