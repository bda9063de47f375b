/**
 * Crowding parameter ξ = ρ·⟨s²⟩: the expected number of other detections inside the area
 * swept by one frame's step (detectors.md §5; the dimensionless ratio of mean squared step to the
 * squared mean nearest-neighbour spacing used to judge linkability since Crocker & Grier 1996,
 * J. Colloid Interface Sci. 179:298).
 *
 * Publish it live as a linking-risk indicator: ξ ≤ 0.003 keeps linking errors near 1 % or less;
 * since ⟨s²⟩ ∝ Δt, a higher frame rate lowers ξ.
 *
 * Bad-input policy: returns `undefined` when either input is not a finite number ≥ 0 (no estimate
 * yet), never throws.
 *
 * Complexity O(1).
 *
 * @param density detections per µm² (count / field area).
 * @param meanSquaredStep 2-D mean squared frame-to-frame step of the detections, µm²
 *   (4DΔt + 4σ² for free diffusion with per-axis localization error σ).
 * @returns ξ, dimensionless.
 *
 * @example
 * crowding(0.01, 0.066); // → 0.00066 (100 particles in 100 × 100 µm, ⟨s²⟩ = 0.066 µm²)
 * crowding(NaN, 0.066);  // → undefined
 */
export function crowding(density: number, meanSquaredStep: number): number | undefined {
  if (!(density >= 0) || !(meanSquaredStep >= 0)) return undefined;
  if (density === Infinity || meanSquaredStep === Infinity) return undefined;
  return density * meanSquaredStep;
}
