import { describe, expect, it } from 'vitest';
import { SparseDetector } from '../../../src/detectors/quality/sparseDetector.js';
import type { Condition } from '../../../src/alerts/condition.js';
import { SyntheticSteps, makeContext } from '../drift/syntheticSteps.js';

const DT = 0.033;

function run(particles: number, sigma: number, diffusion: number, targetPrecision: number): { detector: SparseDetector; conditions: Condition[] } {
  const source = new SyntheticSteps({ seed: particles, particles, diffusion, sigma, frameInterval: DT, field: 100, meanTrackLength: Infinity });
  const detector = new SparseDetector({ targetPrecision });
  const context = makeContext(diffusion, 1, sigma);
  const conditions: Condition[] = [];
  for (let f = 0; f < 1000; f++) conditions.push(...detector.push(source.next(), context));
  return { detector, conditions };
}

describe('SparseDetector', () => {
  it('new SparseDetector(options) rejects bad options naming the option', () => {
    expect(() => new SparseDetector({ targetPrecision: 0 })).toThrow(/targetPrecision/);
    expect(() => new SparseDetector({ analysisSeconds: -1 })).toThrow(/analysisSeconds/);
  });

  it('reachable precision follows the pooled CVE variance at the measured step rate', () => {
    // Vestergaard, Blainey & Flyvbjerg 2014 variance (estimators.md §2), 2-D, N steps per track → ∞ here:
    // relative SE ≈ √((6 + 4ε + 2ε²)/(2·rate·60 s)) with rate = particles/Δt steps per second
    const { detector } = run(20, 0.02, 0.49, 0.05);
    const epsilon = (0.02 * 0.02) / (0.49 * DT);
    const expected = Math.sqrt((6 + 4 * epsilon + 2 * epsilon * epsilon) / (2 * (20 / DT) * 60));
    expect(detector.summary().reachablePrecision! / expected).toBeGreaterThan(0.97);
    expect(detector.summary().reachablePrecision! / expected).toBeLessThan(1.03);
  });

  it('warns with too few particles at large x, and not with plenty', () => {
    // x = σ²/(DΔt) ≈ 3.9 (σ = 80 nm, D = 0.05 µm²/s): 10,800 steps per 5 % ⇒ ≈ 6 particles at 30 fps over 60 s
    const few = run(2, 0.08, 0.05, 0.05);
    const warn = few.conditions.filter((c) => c.key === 'sparse:precision' && c.level === 'warn');
    expect(warn.length).toBe(1);
    expect(few.detector.summary().particlesNeeded!).toBeGreaterThan(4);
    expect(few.detector.summary().particlesNeeded!).toBeLessThan(8);
    const many = run(20, 0.08, 0.05, 0.05);
    expect(many.conditions.filter((c) => c.key === 'sparse:precision')).toHaveLength(0);
  });
});
