import { chiSquareQuantile } from '../../stats/quantiles.js';

/**
 * The dimer fraction from the intensity population (detectors.md §3e): the tracks' median log
 * intensities L_i are fitted by a two-component normal mixture with means μ and μ + ln 2 and one
 * shared SD s (log-normal in I: a dimer is twice as bright as a monomer), by EM (Dempster, Laird &
 * Rubin, J. R. Stat. Soc. B 39:1, 1977; for normal mixtures, McLachlan & Peel, "Finite Mixture
 * Models", 2000, ch. 3).
 *
 * - φ, the fraction of tracks that are dimers, is kept in [0, ½]: a population of dimers alone
 *   has the same likelihood as one of monomers (μ shifts by ln 2), so monomers are taken to be
 *   the majority, as they are while a run starts clean.
 * - Its 95 % CI is the profile-likelihood interval, {φ : 2(ℓ̂ − ℓ_p(φ)) ≤ 3.841} with μ and s
 *   refitted at each φ (χ²₁ 0.95 quantile). At the bound φ = 0 the statistic's null distribution
 *   is ½χ²₀ + ½χ²₁ (Self & Liang, JASA 82:605, 1987), so the interval is conservative there.
 * - Each track counts once (its median over its recent frames), as §3e asks: per-frame values of
 *   the same particles are not independent.
 *
 * Cost: O(n) per EM iteration (one exp and one log1p per track); 6 starts (the monomer mean at
 * the median, lower quartile and tenth percentile, each with φ = 0.1 and the robust spread or
 * φ = 0.3 and half of it; the highest likelihood wins), then two bisections of about 20 profile
 * fits each, warm-started. Units: L in ln(intensity units); s in the same.
 *
 * @returns the fit, or null with fewer than `minTracks` finite values or no spread at all.
 *
 * @example
 * intensityMixture(logMedians, logMedians.length)
 * // → { dimerFraction: 0.21, ci95: [0.17, 0.25], monomerLogIntensity: 6.9, spread: 0.15, tracks: 800, … }
 */
export function intensityMixture(values: ArrayLike<number>, count: number, minTracks = 30): IntensityMixture | null {
  const data: number[] = [];
  for (let i = 0; i < count; i++) if (Number.isFinite(values[i])) data.push(values[i]);
  const n = data.length;
  if (n < Math.max(3, minTracks)) return null;
  const sorted = data.slice().sort((a, b) => a - b);
  const median = sorted[Math.floor(n / 2)];
  const mad = sorted.map((v) => Math.abs(v - median)).sort((a, b) => a - b)[Math.floor(n / 2)];
  if (!(sorted[n - 1] > sorted[0])) return null;
  // EM finds a local maximum: start from several places and keep the highest. A bimodal
  // population fitted from its median can settle on one wide component (φ = 0), so the monomer
  // mean also starts at the lower quartile and tenth percentile, with narrower spreads.
  const robustSpread = Math.max(1.4826 * mad, 1e-3);
  let best: MixtureFit | undefined;
  for (const q of [0.5, 0.25, 0.1]) {
    for (const [phi, spreadFactor] of STARTS) {
      const fit = fitMixture(data, { phi, mu: sorted[Math.floor(q * (n - 1))], s: robustSpread * spreadFactor }, undefined);
      if (!best || fit.logLikelihood > best.logLikelihood) best = fit;
    }
  }
  if (!best) return null;
  const target = best.logLikelihood - CHI2_1_95 / 2;
  // profile likelihood: increasing on [0, φ̂], decreasing on [φ̂, ½]
  const profile = (phi: number, from: MixtureFit): MixtureFit => fitMixture(data, from, phi);
  const edge = (inside: number, outside: number): number => {
    const atOutside = profile(outside, best);
    if (atOutside.logLikelihood >= target) return outside;
    let a = inside;
    let b = outside;
    let warm: MixtureFit = best;
    for (let k = 0; k < 40 && Math.abs(b - a) > 1e-4; k++) {
      const m = (a + b) / 2;
      const fit = profile(m, warm);
      if (fit.logLikelihood >= target) {
        a = m;
        warm = fit;
      } else b = m;
    }
    return (a + b) / 2;
  };
  const low = best.phi > 0 ? edge(best.phi, 0) : 0;
  const high = best.phi < MAX_PHI ? edge(best.phi, MAX_PHI) : MAX_PHI;
  return {
    dimerFraction: best.phi,
    ci95: [Math.min(low, best.phi), Math.max(high, best.phi)],
    monomerLogIntensity: best.mu,
    spread: best.s,
    tracks: n,
    logLikelihood: best.logLikelihood,
    iterations: best.iterations,
  };
}

/** The fit of {@link intensityMixture}. */
export interface IntensityMixture {
  /** φ̂, fraction of the tracks that are dimers (0…½). */
  dimerFraction: number;
  /** Profile-likelihood 95 % interval of φ. */
  ci95: [number, number];
  /** μ̂: mean log intensity of a monomer. */
  monomerLogIntensity: number;
  /** ŝ: SD of the log intensities within a component. */
  spread: number;
  /** Tracks fitted. */
  tracks: number;
  logLikelihood: number;
  /** EM iterations of the free fit. */
  iterations: number;
}

interface MixtureFit {
  phi: number;
  mu: number;
  s: number;
  logLikelihood: number;
  iterations: number;
}

const LN2 = Math.LN2;
/** Starting (φ, spread factor) pairs, each tried with the monomer mean at three quantiles. */
const STARTS: readonly (readonly [number, number])[] = [
  [0.1, 1],
  [0.3, 0.5],
];
const MAX_PHI = 0.5;
/** χ²₁ 0.95 quantile, 3.841. */
const CHI2_1_95 = chiSquareQuantile(0.95, 1);
const HALF_LOG_2PI = 0.5 * Math.log(2 * Math.PI);

/**
 * EM for the mixture from `start`; with `fixedPhi`, φ stays at that value (a profile fit).
 * Stops when the log-likelihood gains less than 10⁻⁸·n, or after 2,000 iterations.
 */
function fitMixture(data: readonly number[], start: { phi: number; mu: number; s: number }, fixedPhi: number | undefined): MixtureFit {
  const n = data.length;
  let phi = fixedPhi ?? Math.min(MAX_PHI, Math.max(1e-3, start.phi));
  let mu = start.mu;
  let s = start.s;
  let previous = Number.NEGATIVE_INFINITY;
  let logLikelihood = Number.NEGATIVE_INFINITY;
  let iterations = 0;
  for (; iterations < 2000; iterations++) {
    // E step: responsibilities of the dimer component, and the log-likelihood at (φ, μ, s)
    let sumR = 0;
    let sumShifted = 0; // Σ (L − r·ln 2)
    logLikelihood = 0;
    const responsibilities = scratchFor(n);
    const inverseVariance = 1 / (s * s);
    const logS = Math.log(s);
    const logMonomerWeight = Math.log1p(-phi);
    const logDimerWeight = phi > 0 ? Math.log(phi) : Number.NEGATIVE_INFINITY;
    for (let i = 0; i < n; i++) {
      const a = data[i] - mu;
      const b = a - LN2;
      const logMonomer = logMonomerWeight - 0.5 * a * a * inverseVariance;
      // d = ln(dimer term / monomer term); r = 1/(1 + e^−d), ln(sum) = ln(monomer) + ln(1 + e^d)
      const d = logDimerWeight - 0.5 * b * b * inverseVariance - logMonomer;
      let r: number;
      if (d > 0) {
        const e = Math.exp(-d);
        r = 1 / (1 + e);
        logLikelihood += logMonomer + d + Math.log1p(e);
      } else {
        const e = Math.exp(d); // 0 when φ = 0
        r = e / (1 + e);
        logLikelihood += logMonomer + Math.log1p(e);
      }
      responsibilities[i] = r;
      sumR += r;
      sumShifted += data[i] - r * LN2;
    }
    logLikelihood -= n * (logS + HALF_LOG_2PI);
    if (logLikelihood - previous < 1e-8 * n) break;
    previous = logLikelihood;
    // M step
    if (fixedPhi === undefined) phi = Math.min(MAX_PHI, sumR / n);
    mu = sumShifted / n;
    let squares = 0;
    for (let i = 0; i < n; i++) {
      const a = data[i] - mu;
      const b = a - LN2;
      const r = responsibilities[i];
      squares += (1 - r) * a * a + r * b * b;
    }
    s = Math.max(Math.sqrt(squares / n), 1e-6);
  }
  return { phi, mu, s, logLikelihood, iterations };
}

let scratch = new Float64Array(0);
function scratchFor(n: number): Float64Array {
  if (scratch.length < n) scratch = new Float64Array(Math.max(n, 2 * scratch.length));
  return scratch;
}
