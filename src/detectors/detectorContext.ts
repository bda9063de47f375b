/**
 * The pipeline's current estimates, handed to each detector with every frame, so a detector can
 * turn a statistic into an effect size (for example a drift velocity into an MSD bias). Values are
 * `undefined` while too little data has been seen. Units: µm, s, µm²/s, °C.
 */
export interface DetectorContext {
  /** Pooled diffusion coefficient so far, µm²/s. */
  diffusion: number | undefined;
  /** Its standard error, µm²/s. */
  diffusionSe: number | undefined;
  /** Localization error σ per axis, µm. */
  localizationError: number | undefined;
  /** Motion-blur coefficient R = t_E/(6Δt). */
  blur: number;
  /** Longest MSD lag in use by the estimators, s. */
  longestLag: number;
  /** Reported sample temperature now, °C (sensor log or constant), or undefined. */
  reportedTemperature: number | undefined;
  /** Stokes-Einstein D at the reported temperature (wall-corrected when a height is given), µm²/s. */
  expectedDiffusion: number | undefined;
  /** Its standard uncertainty from the radius uncertainty, µm²/s. */
  expectedDiffusionSd: number | undefined;
  /** Nominal particle radius, µm, when given. */
  radius: number | undefined;
}
