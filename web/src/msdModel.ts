/** What the MSD chart needs from a report's diffusion estimate (µm²/s, µm², s). */
export interface MsdModelInput {
  /** Diffusion coefficient D, µm²/s. */
  diffusion: number;
  /** Localization variance σ² per axis, µm². */
  localizationVariance: number;
  /** Motion-blur coefficient R (1; t_E/(6Δt) for uniform exposure). */
  blur: number;
  /** Frame interval Δt, s. */
  frameInterval: number;
  /** Number of axes d. */
  dims: number;
}

/**
 * The estimator's MSD model at lag τ (s), µm²: free diffusion seen through localization error
 * and motion blur, MSD(τ) = 2d·D·τ + 2d·σ² − 4d·R·D·Δt (Berglund 2010, Phys. Rev. E 82, 011917;
 * Savin & Doyle 2005 for the blur term). This is the fitted line drawn on the MSD chart.
 *
 * Complexity O(1).
 *
 * @example
 * msdModel({ diffusion: 1, localizationVariance: 0, blur: 1 / 6, frameInterval: 1, dims: 2 }, 1) // → 8/3
 */
export function msdModel(m: MsdModelInput, lag: number): number {
  return 2 * m.dims * m.diffusion * lag + 2 * m.dims * m.localizationVariance - 4 * m.dims * m.blur * m.diffusion * m.frameInterval;
}
