import jStatModule from 'jstat';

// jstat is CommonJS; its default export is the jStat object itself, or carries it as `.jStat`.
const jStat = ((jStatModule as unknown as { jStat?: unknown }).jStat ?? jStatModule) as typeof import('jstat').jStat;

/** Parameters of {@link gammaCusumArl}. */
export interface GammaCusumArlParameters {
  /** Decision threshold h of the chart, nats (> 0). */
  threshold: number;
  /** Design ratio q = θ1/θ0 of the chart (> 0, ≠ 1): q > 1 watches for a rise, q < 1 for a fall. */
  ratio: number;
  /** Gamma shape per frame (the number of independent squared steps, n − 1 after mean removal), > 0. */
  shape: number;
  /** True scale over the baseline scale, θ/θ0 (1 in control; q for the design shift). Default 1. */
  scaleRatio?: number;
  /** Markov-chain states of the coarser grid (the finer grid has twice as many). Default 100. */
  states?: number;
}

/**
 * Average run length (frames, starting from W = 0) of the one-sided log-likelihood-ratio CUSUM
 * for a Gamma scale change, W_t = max(0, W_{t−1} + ℓ_t), alarm when W_t > h, with
 * ℓ_t = n[ln(1/q) + u_t(1 − 1/q)] and u_t = S_t/(nθ0) ~ Gamma(n, scaleRatio/n).
 *
 * Method: the Markov-chain approximation of Brook & Evans (1972, Biometrika 59:539). The interval
 * [0, h] is cut into m cells of width w = 2h/(2m − 1) with midpoints iw (cell 0 also holds the atom
 * at W = 0); the transition matrix P over the transient cells is built from the CDF of ℓ, and the
 * ARL from zero is the first entry of (I − P)⁻¹·1. The discretisation error falls as 1/m², so the
 * result is Richardson-extrapolated from m and 2m states: L ≈ (4L_{2m} − L_m)/3.
 *
 * Complexity: O(m³) time (dense Gaussian elimination), O(m²) memory; about 10 ms at m = 100.
 * Throws RangeError on bad parameters.
 *
 * @example
 * gammaCusumArl({ threshold: 6.5, ratio: 1.05, shape: 100 }); // → about 9.6e3 frames (detectors.md §4)
 */
export function gammaCusumArl(parameters: GammaCusumArlParameters): number {
  const { threshold, ratio, shape } = parameters;
  const scaleRatio = parameters.scaleRatio ?? 1;
  const states = parameters.states ?? 100;
  if (!(threshold > 0) || !Number.isFinite(threshold)) throw new RangeError('gammaCusumArl requires threshold > 0');
  if (!(ratio > 0) || ratio === 1 || !Number.isFinite(ratio)) throw new RangeError('gammaCusumArl requires ratio > 0 and ratio != 1');
  if (!(shape > 0) || !Number.isFinite(shape)) throw new RangeError('gammaCusumArl requires shape > 0');
  if (!(scaleRatio > 0) || !Number.isFinite(scaleRatio)) throw new RangeError('gammaCusumArl requires scaleRatio > 0');
  if (!(states >= 5) || !Number.isInteger(states)) throw new RangeError('gammaCusumArl requires an integer states >= 5');
  const coarse = markovChainArl(threshold, ratio, shape, scaleRatio, states);
  const fine = markovChainArl(threshold, ratio, shape, scaleRatio, 2 * states);
  return (4 * fine - coarse) / 3;
}

/** CDF of one CUSUM increment ℓ = n[−ln q + u(1 − 1/q)], u ~ Gamma(n, r/n). */
function incrementCdf(x: number, ratio: number, shape: number, scaleRatio: number): number {
  const slope = 1 - 1 / ratio; // > 0 for a rise chart, < 0 for a fall chart
  const uBound = (x / shape + Math.log(ratio)) / slope;
  const gammaCdf = uBound <= 0 ? 0 : jStat.lowRegGamma(shape, (uBound * shape) / scaleRatio);
  return slope > 0 ? gammaCdf : 1 - gammaCdf;
}

function markovChainArl(threshold: number, ratio: number, shape: number, scaleRatio: number, m: number): number {
  const width = (2 * threshold) / (2 * m - 1);
  // Transitions depend only on the cell difference k = j − i: precompute F((k + ½)w) for k = −m..m.
  const upper = new Float64Array(2 * m + 1);
  for (let k = -m; k <= m; k++) upper[k + m] = incrementCdf((k + 0.5) * width, ratio, shape, scaleRatio);
  // A = I − P, augmented with the right-hand side 1 in column m.
  const columns = m + 1;
  const a = new Float64Array(m * columns);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) {
      const k = j - i;
      const p = j === 0 ? upper[k + m] : upper[k + m] - upper[k - 1 + m];
      a[i * columns + j] = (i === j ? 1 : 0) - p;
    }
    a[i * columns + m] = 1;
  }
  // Gaussian elimination with partial pivoting (I − P is an M-matrix, so this is stable).
  for (let col = 0; col < m; col++) {
    let pivot = col;
    for (let r = col + 1; r < m; r++) if (Math.abs(a[r * columns + col]) > Math.abs(a[pivot * columns + col])) pivot = r;
    if (pivot !== col) {
      for (let c = col; c < columns; c++) {
        const swap = a[col * columns + c];
        a[col * columns + c] = a[pivot * columns + c];
        a[pivot * columns + c] = swap;
      }
    }
    const diagonal = a[col * columns + col];
    for (let r = col + 1; r < m; r++) {
      const factor = a[r * columns + col] / diagonal;
      if (factor === 0) continue;
      for (let c = col; c < columns; c++) a[r * columns + c] -= factor * a[col * columns + c];
    }
  }
  const solution = new Float64Array(m);
  for (let r = m - 1; r >= 0; r--) {
    let sum = a[r * columns + m];
    for (let c = r + 1; c < m; c++) sum -= a[r * columns + c] * solution[c];
    solution[r] = sum / a[r * columns + r];
  }
  return solution[0];
}
