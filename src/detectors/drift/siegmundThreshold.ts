import { siegmundArl } from './siegmundArl.js';

/**
 * The decision interval h that gives a one-sided Page CUSUM with reference value k the
 * in-control average run length `arl0` (frames), by inverting Siegmund's approximation
 * (see {@link siegmundArl}) with bisection. ARL(0; k, h) increases with h, so the root is unique.
 * O(log(1/ε)) evaluations, ε = 1e-10 relative.
 *
 * @param k reference value in SD of the innovation, > 0
 * @param arl0 wanted in-control ARL, frames, > 1
 * @returns h, in SD of the innovation (0 when arl0 is below the ARL at h = 0)
 * @example
 * siegmundThreshold(0.5, 338.0); // → 4.00
 * siegmundThreshold(0.5, 938.2); // → 5.00
 */
export function siegmundThreshold(k: number, arl0: number): number {
  if (!(k > 0) || !Number.isFinite(k)) throw new RangeError('siegmundThreshold requires k > 0');
  if (!(arl0 > 1) || !Number.isFinite(arl0)) throw new RangeError('siegmundThreshold requires arl0 > 1');
  if (siegmundArl(0, k, 0) >= arl0) return 0;
  let low = 0;
  // For Δ = −k, ARL ≈ e^{2kb}/(2k²), so b ≈ ln(2k²·ARL0)/(2k); start above it and double if needed.
  let high = Math.max(1, Math.log(Math.max(2, 2 * k * k * arl0)) / (2 * k)) * 2 + 10;
  while (siegmundArl(0, k, high) < arl0) high *= 2;
  for (let iteration = 0; iteration < 200 && high - low > 1e-10 * high; iteration++) {
    const middle = 0.5 * (low + high);
    if (siegmundArl(0, k, middle) < arl0) low = middle;
    else high = middle;
  }
  return 0.5 * (low + high);
}
