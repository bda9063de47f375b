/** First zero of the Bessel function J₀, squared: the first Dirichlet eigenvalue of the unit disk. */
export const BESSEL_J0_FIRST_ZERO_SQUARED = 5.783185962946784;

/**
 * Effective capture radius of a pair sampled every Δt: r_eff ≈ r_c + 0.58·√(4DΔt) (detectors.md
 * §3c, discrete-sampling correction: a pair can leave and come back between frames unseen).
 *
 * @param closeDistance r_c, µm
 * @param diffusion single-particle D, µm²/s
 * @param frameInterval Δt, s
 * @returns r_eff, µm
 * @example effectiveCaptureRadius(1.5, 0.49, 0.033) // → 1.5 + 0.58·√(0.0647) = 1.6475
 */
export function effectiveCaptureRadius(closeDistance: number, diffusion: number, frameInterval: number): number {
  return closeDistance + 0.58 * Math.sqrt(4 * diffusion * frameInterval);
}

/**
 * Probability that a chance close pair (relative coordinate uniform in the disk of radius r_c)
 * is still within r_c after time t, for two independent Brownian particles (relative D = 2D):
 * S(t) ≈ (4/j₀,₁²)·exp(−j₀,₁²·2D·t/r_eff²) — the leading term of the eigenfunction expansion of
 * the diffusion equation in a disk with an absorbing edge (Carslaw & Jaeger, Conduction of Heat
 * in Solids, §7.4 disk solution; constants in detectors.md §3c). Valid once S ≲ 0.5.
 *
 * @param time t, s (≥ 0)
 * @param diffusion single-particle D, µm²/s
 * @param effectiveRadius r_eff, µm (see {@link effectiveCaptureRadius})
 * @returns S(t), dimensionless, capped at 1
 * @example chancePersistence(4.2, 0.49, 1.6475) // → ≈ 1.1e-4
 */
export function chancePersistence(time: number, diffusion: number, effectiveRadius: number): number {
  const rate = (BESSEL_J0_FIRST_ZERO_SQUARED * 2 * diffusion) / (effectiveRadius * effectiveRadius);
  return Math.min(1, (4 / BESSEL_J0_FIRST_ZERO_SQUARED) * Math.exp(-rate * time));
}

/**
 * Safety factor on the level of S(t) in {@link persistenceFrames}: with the discrete-sampling
 * r_eff the decay rate is right (within 1 %), but sampled chance pairs outlive the one-term law
 * by about 18 % at S ≈ 0.08 (our seeded Monte Carlo, test/detectors/clumping/chancePersistence.test.ts).
 */
export const PERSISTENCE_LEVEL_MARGIN = 1.2;

/** Inputs of {@link persistenceFrames}. */
export interface PersistenceDesign {
  /** Single-particle D, µm²/s. */
  diffusion: number;
  /** Close-pair distance r_c, µm. */
  closeDistance: number;
  /** Frame interval Δt, s. */
  frameInterval: number;
  /** Mean number of pairs within r_c per frame (observed at baseline, or N(N−1)πr_c²/(2A) under CSR). */
  closePairsPerFrame: number;
  /** Allowed expected number of chance persistent pairs per hour. */
  chancePairsPerHour: number;
}

/**
 * The persistence length L (frames) such that chance encounters alone produce at most
 * `chancePairsPerHour` pairs staying within r_c for L frames. With n_c close pairs per frame at
 * equilibrium, the number whose episode has lasted ≥ t is n_c·S(t) (time reversal: age and
 * residual life have the same law), so pairs cross age t at the rate n_c·S(t)·(1 − e^{−λΔt}) per
 * frame, λ = j₀,₁²·2D/r_eff². Solving framesPerHour × that × PERSISTENCE_LEVEL_MARGIN = target
 * for t gives L = ⌈t/Δt⌉ + 1 frames (L frames span L − 1 intervals; at least the time where S = 0.5, the law's range of validity).
 *
 * @returns L, frames (≥ 2)
 * @example
 * persistenceFrames({ diffusion: 0.49, closeDistance: 1.5, frameInterval: 0.033,
 *   closePairsPerFrame: 2, chancePairsPerHour: 0.04 }) // → 185 frames (6.1 s)
 */
export function persistenceFrames(design: PersistenceDesign): number {
  const { diffusion, closeDistance, frameInterval, closePairsPerFrame, chancePairsPerHour } = design;
  const rEff = effectiveCaptureRadius(closeDistance, diffusion, frameInterval);
  const rate = (BESSEL_J0_FIRST_ZERO_SQUARED * 2 * diffusion) / (rEff * rEff); // 1/s
  const framesPerHour = 3600 / frameInterval;
  const crossingsPerHourAtS1 = framesPerHour * Math.max(closePairsPerFrame, 1e-6) * (1 - Math.exp(-rate * frameInterval));
  const survival = chancePairsPerHour / (PERSISTENCE_LEVEL_MARGIN * crossingsPerHourAtS1);
  const time = Math.log((4 / BESSEL_J0_FIRST_ZERO_SQUARED) / Math.min(survival, 0.5)) / rate;
  // L frames inside span L − 1 steps of Δt
  return Math.max(2, Math.ceil(time / frameInterval) + 1);
}
