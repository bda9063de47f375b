import { gammaCusumArl } from './gammaCusumArl.js';

/** Parameters of {@link gammaCusumThreshold}. */
export interface GammaCusumThresholdParameters {
  /** Wanted in-control average run length of the one chart, frames (> 1). */
  arl0Frames: number;
  /** Design ratio q = θ1/θ0 (> 0, ≠ 1). */
  ratio: number;
  /** Gamma shape per frame (> 0). */
  shape: number;
  /**
   * Markov-chain states of each ARL evaluation's coarser grid (default 50). Against 200 states,
   * 50 give ARL0 within 2·10⁻⁴ relative (h = 6.5, q = 1.05, n = 100: 9959.07 vs 9959.58 frames;
   * n = 500, 2000, 40: within 2·10⁻⁵), i.e. h within 2·10⁻⁴ nats, for a quarter to a tenth of the
   * time of 100 states (the temperature detector's slowest push, its run-start design, fell from
   * 75 to 26 ms in tools/bench/detectorCosts.ts).
   */
  states?: number;
}

/**
 * The threshold h (nats) that gives a one-sided Gamma-scale CUSUM the wanted in-control ARL,
 * found by a secant search on ln ARL0(h) (nearly linear in h), each ARL from the Brook & Evans
 * (1972) Markov chain of {@link gammaCusumArl}. Lorden's bound ARL0 ≥ e^h (Lorden 1971) gives the
 * bracket: h ≤ ln ARL0.
 *
 * Complexity: about 6–10 ARL evaluations, O(m³) each; some 10 ms in all at the default m = 50. Throws RangeError on
 * bad parameters.
 *
 * @example
 * gammaCusumThreshold({ arl0Frames: 9.6e3, ratio: 1.05, shape: 100 }); // → about 6.5 (detectors.md §4)
 */
export function gammaCusumThreshold(parameters: GammaCusumThresholdParameters): number {
  const { arl0Frames, ratio, shape } = parameters;
  const states = parameters.states ?? 50;
  if (!(arl0Frames > 1) || !Number.isFinite(arl0Frames)) throw new RangeError('gammaCusumThreshold requires arl0Frames > 1');
  const target = Math.log(arl0Frames);
  const f = (h: number): number => Math.log(gammaCusumArl({ threshold: h, ratio, shape, states })) - target;
  let h0 = Math.max(0.05, 0.6 * target);
  let h1 = Math.max(0.1, 0.8 * target);
  let f0 = f(h0);
  let f1 = f(h1);
  for (let iteration = 0; iteration < 30 && Math.abs(f1) > 1e-6; iteration++) {
    const slope = (f1 - f0) / (h1 - h0);
    let next = slope > 0 ? h1 - f1 / slope : h1 + 0.5;
    if (!(next > 0)) next = h1 / 2;
    h0 = h1;
    f0 = f1;
    h1 = next;
    f1 = f(h1);
  }
  return h1;
}
