/**
 * The liquid the particles are suspended in, as chosen by the `--medium` option (CONTRACTS §1)
 * or the `medium` field of a live `run` message. Build one with {@link parseMedium}; turn it back
 * into the option string with {@link formatMedium}.
 *
 * - `water`: pure water at 0.1 MPa, viscosity by Pátek et al. 2009 (−20…110 °C).
 * - `glycerol-water`: a glycerol–water mixture of the given glycerol **mass** fraction (0..1),
 *   viscosity by Cheng 2008 (0…100 °C).
 * - `viscosity`: a fixed viscosity in mPa·s, independent of temperature (so there is no implied
 *   temperature).
 *
 * @example
 * const medium: Medium = { kind: 'glycerol-water', glycerolMassFraction: 0.5 };
 */
export type Medium =
  | { readonly kind: 'water' }
  | { readonly kind: 'glycerol-water'; /** glycerol mass fraction, 0..1 */ readonly glycerolMassFraction: number }
  | { readonly kind: 'viscosity'; /** fixed dynamic viscosity, mPa·s (> 0) */ readonly milliPascalSeconds: number };
