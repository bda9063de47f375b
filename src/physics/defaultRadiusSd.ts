/** Relative standard uncertainty assumed for a nominal bead radius when none is given (2 %). */
export const DEFAULT_RADIUS_RELATIVE_SD = 0.02;

/**
 * The radius uncertainty used when `--radius-sd` (or the `radiusSd` run field) is not given:
 * 2 % of the nominal radius (CONTRACTS §1). This is a typical size-distribution width quoted for
 * monodisperse polystyrene and silica calibration beads (common practice, no source); beads with
 * a wider distribution should be given their own value.
 *
 * Complexity: O(1).
 *
 * @param radius nominal radius, µm
 * @returns standard uncertainty of the radius, µm
 * @example
 * defaultRadiusSd(0.5) // → 0.01 (µm)
 */
export function defaultRadiusSd(radius: number): number {
  return DEFAULT_RADIUS_RELATIVE_SD * radius;
}
