/**
 * Checks the particle geometry shared by {@link expectedDiffusion}, {@link impliedTemperature}
 * and {@link impliedRadius}, once, at the door (internal helper, not part of the public API).
 *
 * @param caller the public function's name, for the message
 * @param radius radius, µm (must be finite and > 0), or undefined when it is not an input
 * @param radiusSd radius standard uncertainty, µm (finite and ≥ 0), or undefined
 * @param height centre height above the wall, µm (finite and ≥ radius), or undefined for none
 * @throws RangeError naming the bad parameter
 * @example
 * checkGeometry('expectedDiffusion', 0.5, 0.01, 2); // → undefined (no throw)
 */
export function checkGeometry(caller: string, radius?: number, radiusSd?: number, height?: number): void {
  if (radius !== undefined && !(radius > 0 && Number.isFinite(radius))) {
    throw new RangeError(`${caller} requires radius > 0 (µm)`);
  }
  if (radiusSd !== undefined && !(radiusSd >= 0 && Number.isFinite(radiusSd))) {
    throw new RangeError(`${caller} requires radiusSd >= 0 (µm)`);
  }
  if (height !== undefined) {
    if (!(height > 0 && Number.isFinite(height))) throw new RangeError(`${caller} requires height > 0 (µm)`);
    if (radius !== undefined && !(height >= radius)) {
      throw new RangeError(`${caller} requires height >= radius (centre height above the wall, µm)`);
    }
  }
}
