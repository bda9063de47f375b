import type { SegmentSpectrum } from './segmentSpectrum.js';

/** Squared step amplitude of a common-mode line and its approximate sampling variance. */
export interface LineAmplitude {
  /** B̂², the squared 0-to-peak amplitude of the line in the common-mode steps, µm² (may be ≤ 0 by noise). */
  squared: number;
  /** Approximate standard error of B̂², µm². */
  squaredSe: number;
}

// Correlation of Hann-windowed DFT bins of white noise at bin distance 0, 1, 2 (window weights
// −¼, ½, −¼ in the frequency domain): 1, −2/3, 1/6; zero further apart. Common practice, no source.
const HANN_BIN_CORRELATION = [1, -2 / 3, 1 / 6];

/**
 * Amplitude of a spectral line in the cross-particle mean steps, from the K segment spectra of
 * one window: the signal power per bin is |Z̄_k|² minus its noise part n_k = Σ_i|Z_ik − Z̄_k|² /
 * (N_k(N_k−1)) (the within-segment scatter estimates each particle's own power), summed over
 * the peak bin ± `halfWidth` (the Hann main lobe), averaged over segments, and scaled by
 * Parseval for a Hann window: B² = 4·ΣP/(L·Σw²). The standard error treats the segments as
 * independent and the bins as correlated as for white noise (Var|a+e|² ≈ |c|² + 2Re(a b̄ c̄) for
 * complex Gaussian noise of covariance c); it is an approximation. O(K·halfWidth²).
 *
 * @param segments the window's segment spectra
 * @param axis 0 for x, 1 for y
 * @param peakBin the bin of the local maximum
 * @param halfWidth bins on either side to include (2 covers the Hann main lobe off-bin)
 * @example
 * lineAmplitude(ring, 0, 35, 2).squared; // → about (2·sin(πfΔt)·A)² for a line of amplitude A
 */
export function lineAmplitude(
  segments: readonly SegmentSpectrum[],
  axis: 0 | 1,
  peakBin: number,
  halfWidth: number,
): LineAmplitude {
  const K = segments.length;
  const L = segments[0].length;
  const first = Math.max(1, peakBin - halfWidth); // never the DC bin (constant drift lives there)
  const last = Math.min(segments[0].bins - 2, peakBin + halfWidth); // nor Nyquist
  let power = 0;
  let noiseVariance = 0;
  let signalVariance = 0;
  for (let k = 0; k < K; k++) {
    const s = segments[k];
    const N = s.count;
    const between = s.between[axis];
    const within = s.within[axis];
    const re = s.meanRe[axis];
    const im = s.meanIm[axis];
    for (let j = first; j <= last; j++) {
      const noise = within[j] / (N * (N - 1));
      power += between[j] / N - noise;
      for (let l = first; l <= last; l++) {
        const distance = Math.abs(j - l);
        if (distance > 2) continue;
        const rho = HANN_BIN_CORRELATION[distance];
        const noiseOther = within[l] / (N * (N - 1));
        const c = rho * Math.sqrt(noise * noiseOther);
        // Signal cross term Re(s̄_j s_l), estimated by the observed means less their noise
        // covariance (E[Re(Z̄_j conj Z̄_l)] = Re(s_j s̄_l) + c).
        const cross = re[j] * re[l] + im[j] * im[l] - c;
        // Cov(|a_j|², |a_l|²) = c² + 2c·Re(s̄_j s_l) for a = signal + circular Gaussian noise.
        noiseVariance += c * c;
        signalVariance += 2 * c * cross;
      }
    }
  }
  const scale = 4 / (L * segments[0].windowSumSquares);
  return { squared: (power / K) * scale, squaredSe: (Math.sqrt(noiseVariance + Math.max(0, signalVariance)) / K) * scale };
}
