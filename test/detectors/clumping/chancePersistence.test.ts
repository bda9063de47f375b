import { describe, expect, it } from 'vitest';
import { BESSEL_J0_FIRST_ZERO_SQUARED, PERSISTENCE_LEVEL_MARGIN, chancePersistence, effectiveCaptureRadius, persistenceFrames } from '../../../src/detectors/clumping/chancePersistence.js';
import { Random } from '../../../src/stats/random.js';

describe('chancePersistence', () => {
  it('BESSEL_J0_FIRST_ZERO_SQUARED is j₀,₁² = 2.404825557695773²', () => {
    // Abramowitz & Stegun (1964) table 9.5: first zero of J₀ = 2.404825558
    expect(BESSEL_J0_FIRST_ZERO_SQUARED).toBeCloseTo(2.404825557695773 ** 2, 12);
  });

  it('chancePersistence() reproduces the worked example: τ ≈ 0.48 s, S = 1e-4 at ≈ 4.2 s (128 frames)', () => {
    // detectors.md §3c example: D = 0.49 µm²/s, r_c = 1.5 µm, Δt = 33 ms
    const rEff = effectiveCaptureRadius(1.5, 0.49, 0.033);
    expect(rEff).toBeCloseTo(1.5 + 0.58 * Math.sqrt(4 * 0.49 * 0.033), 12);
    const tau = (rEff * rEff) / (BESSEL_J0_FIRST_ZERO_SQUARED * 2 * 0.49);
    expect(tau).toBeCloseTo(0.48, 2);
    const t = tau * Math.log(0.69 / 1e-4);
    expect(t).toBeCloseTo(4.2, 1);
    expect(Math.round(t / 0.033)).toBeGreaterThanOrEqual(127);
    expect(Math.round(t / 0.033)).toBeLessThanOrEqual(129);
    expect(chancePersistence(t, 0.49, rEff)).toBeCloseTo(1e-4 * (4 / BESSEL_J0_FIRST_ZERO_SQUARED / 0.69), 8);
  });

  it('chancePersistence() matches a Monte Carlo of sampled pair separations (decay rate within 10 %, level within 30 %)', () => {
    // detectors.md §3c [V]: decay rate matches within ≈ 5 % with the discrete-sampling r_eff.
    // Relative coordinate: uniform start in the disk of radius r_c, steps N(0, 2·2DΔt) per axis,
    // "still close" = inside r_c at every frame.
    const random = new Random(77);
    const D = 0.49, dt = 0.033, rc = 1.5, reps = 20000;
    const checkFrames = [30, 45]; // 1.0 s and 1.5 s, where S ≈ 0.08 and 0.03
    const alive = [0, 0];
    const s = Math.sqrt(2 * 2 * D * dt);
    for (let k = 0; k < reps; k++) {
      const r = rc * Math.sqrt(random.uniform());
      const a = 2 * Math.PI * random.uniform();
      let x = r * Math.cos(a), y = r * Math.sin(a);
      for (let f = 1; f <= checkFrames[1]; f++) {
        x += s * random.normal();
        y += s * random.normal();
        if (x * x + y * y > rc * rc) break;
        if (f === checkFrames[0]) alive[0]++;
        if (f === checkFrames[1]) alive[1]++;
      }
    }
    const rEff = effectiveCaptureRadius(rc, D, dt);
    const lambda = (BESSEL_J0_FIRST_ZERO_SQUARED * 2 * D) / (rEff * rEff);
    const measuredRate = Math.log(alive[0] / alive[1]) / ((checkFrames[1] - checkFrames[0]) * dt);
    expect(measuredRate / lambda).toBeGreaterThan(0.9);
    expect(measuredRate / lambda).toBeLessThan(1.1);
    for (let c = 0; c < 2; c++) {
      const predicted = chancePersistence(checkFrames[c] * dt, D, rEff);
      expect(alive[c] / reps / predicted).toBeGreaterThan(0.8);
      expect(alive[c] / reps / predicted).toBeLessThan(1.3);
    }
  });
});

describe('persistenceFrames', () => {
  it('persistenceFrames(design) is the shortest L whose chance rate per hour meets the target', () => {
    // inverse of the crossing-rate law in chancePersistence.ts (derived; detectors.md §3c)
    const design = { diffusion: 0.43, closeDistance: 1.5, frameInterval: 0.05, closePairsPerFrame: 1.2, chancePairsPerHour: 0.05 };
    const L = persistenceFrames(design);
    const rEff = effectiveCaptureRadius(1.5, 0.43, 0.05);
    const lambda = (BESSEL_J0_FIRST_ZERO_SQUARED * 2 * 0.43) / (rEff * rEff);
    const perHour = (frames: number): number => (3600 / 0.05) * 1.2 * (1 - Math.exp(-lambda * 0.05)) * PERSISTENCE_LEVEL_MARGIN * chancePersistence(frames * 0.05, 0.43, rEff);
    // L frames inside span L − 1 intervals
    expect(perHour(L - 1)).toBeLessThanOrEqual(0.05);
    expect(perHour(L - 2)).toBeGreaterThan(0.05);
  });

  it('persistenceFrames(design) grows with a stricter budget and more close pairs', () => {
    const base = { diffusion: 0.43, closeDistance: 1.5, frameInterval: 0.05, closePairsPerFrame: 1, chancePairsPerHour: 0.1 };
    expect(persistenceFrames({ ...base, chancePairsPerHour: 0.01 })).toBeGreaterThan(persistenceFrames(base));
    expect(persistenceFrames({ ...base, closePairsPerFrame: 10 })).toBeGreaterThan(persistenceFrames(base));
    // a huge budget stops at S = 0.5, where the one-term law is still valid
    const rEff = effectiveCaptureRadius(1.5, 0.43, 0.05);
    const lambda = (BESSEL_J0_FIRST_ZERO_SQUARED * 2 * 0.43) / (rEff * rEff);
    expect(persistenceFrames({ ...base, chancePairsPerHour: 1e9 })).toBe(Math.max(2, Math.ceil(Math.log(4 / BESSEL_J0_FIRST_ZERO_SQUARED / 0.5) / lambda / 0.05) + 1));
  });
});
