import { describe, expect, it } from 'vitest';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import { clopperPearson } from '../../src/stats/quantiles.js';
import { brownianFrames } from '../helpers/brownianFrames.js';

/**
 * Coverage of the reported 95 % CI of D over many simulated data sets. The check: the
 * Clopper–Pearson 95 % interval (Clopper & Pearson 1934, Biometrika 26:404) of the observed
 * coverage contains 0.95. The estimators are those of Vestergaard, Blainey & Flyvbjerg 2014 (CVE)
 * and Michalet 2010 (optimal-p MSD fit); the CI is the model variance for few tracks and the
 * delete-a-group jackknife for many.
 */
function coverage(sets: number, settings: { particles: number; frames: number; sigma: number; exposure: number; spread?: number }) {
  const diffusion = 0.5; // µm²/s
  const frameInterval = 0.03; // s
  let covered = 0;
  let sum = 0;
  const names = new Set<string>();
  for (let s = 0; s < sets; s++) {
    const frames = brownianFrames({
      seed: 1000 + s,
      particles: settings.particles,
      frames: settings.frames,
      frameInterval,
      diffusion,
      sigma: settings.sigma,
      exposure: settings.exposure,
      subSteps: 8,
      diffusionSpread: settings.spread,
      field: 1000,
    });
    const pipeline = new Pipeline({ frameInterval, exposure: settings.exposure, driftCorrection: 'fitted' });
    for (const frame of frames) pipeline.push(frame);
    pipeline.finish();
    const report = pipeline.report();
    const d = report.diffusion.coefficient!;
    names.add(report.diffusion.estimator!.name);
    sum += d.value;
    // With a spread of D the target is the population mean D (log-normal with mean D).
    if (d.ci95[0] <= diffusion && diffusion <= d.ci95[1]) covered++;
  }
  return { covered, mean: sum / sets, names };
}

describe('Pipeline 95 % CI of D', () => {
  it('covers the truth at x = 0 with the CVE and the model variance (500 sets, 20 tracks × 100 frames)', () => {
    const { covered, mean, names } = coverage(500, { particles: 20, frames: 100, sigma: 0, exposure: 0 });
    const [low, high] = clopperPearson(covered, 500);
    expect(names).toEqual(new Set(['cve']));
    expect(low).toBeLessThanOrEqual(0.95);
    expect(high).toBeGreaterThanOrEqual(0.95);
    expect(Math.abs(mean / 0.5 - 1)).toBeLessThan(0.01);
  }, 120_000);

  it('covers the truth at x ≈ 5 with the MSD fit chosen (500 sets, 20 tracks × 100 frames)', () => {
    // σ² = 5·D·Δt: σ = √(5 × 0.5 × 0.03) ≈ 0.274 µm; continuous exposure adds blur (R = 1/6).
    const { covered, names, mean } = coverage(500, { particles: 20, frames: 100, sigma: Math.sqrt(5 * 0.5 * 0.03), exposure: 0.03 });
    const [low, high] = clopperPearson(covered, 500);
    expect(names.has('msd-fit')).toBe(true);
    // bias of the mean over 500 sets below 1 % (its SE here is about 0.4 %)
    expect(Math.abs(mean / 0.5 - 1)).toBeLessThan(0.01);
    expect(low).toBeLessThanOrEqual(0.95);
    expect(high).toBeGreaterThanOrEqual(0.95);
  }, 120_000);

  it('covers the population mean with heterogeneous D through the jackknife (500 sets, 60 tracks × 40 frames, CV 0.3)', () => {
    const { covered } = coverage(500, { particles: 60, frames: 40, sigma: 0.02, exposure: 0.03, spread: 0.3 });
    const [low, high] = clopperPearson(covered, 500);
    expect(low).toBeLessThanOrEqual(0.95);
    expect(high).toBeGreaterThanOrEqual(0.95);
  }, 120_000);
});
