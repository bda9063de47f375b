import { describe, expect, it } from 'vitest';
import { chooseEstimator } from '../../src/estimators/chooseEstimator.js';
import { confidenceInterval } from '../../src/estimators/confidenceInterval.js';
import { cveFromSums } from '../../src/estimators/cveFromSums.js';
import { cveVariance } from '../../src/estimators/cveVariance.js';
import { msdFit } from '../../src/estimators/msdFit.js';
import { msdFitRelativeSe } from '../../src/estimators/msdFitRelativeSe.js';
import { timeAveragedMsd } from '../../src/estimators/timeAveragedMsd.js';
import { clopperPearson } from '../../src/stats/quantiles.js';
import { Random } from '../../src/stats/random.js';
import { addSums, cveSumsOf, monteCarlo, simulateAxis } from './simulateDiffusion.js';

// Honest-uncertainty checks: over many simulated data sets the 95 % CI must contain the true D
// 95 % of the time. The Clopper–Pearson interval (Clopper & Pearson 1934, Biometrika 26:404) of the
// observed coverage must contain 0.95. Each data set: one axis, 20 tracks × 101 frames (an invented
// bead sample: D = 0.4 µm²/s, Δt = 0.05 s).
const dataSets = 500;
const tracks = 20;
const frames = 101;
const diffusion = 0.4;
const frameIntervalS = 0.05;

describe('95 % confidence intervals of D', () => {
  it('cveFromSums + cveVariance cover D 95 % of the time at x ≈ 0 (σ² = DΔt/3, t_E = Δt)', monteCarlo, () => {
    // Vestergaard, Blainey & Flyvbjerg 2014 estimator and variance (pooled), plug-in D̂ and ε̂.
    const random = new Random(500_001);
    const sigma = Math.sqrt((diffusion * frameIntervalS) / 3);
    const settings = { diffusion, frameIntervalS, sigma, exposureS: frameIntervalS };
    const blur = 1 / 6;
    const positions = new Float64Array(frames);
    let covered = 0;
    for (let set = 0; set < dataSets; set++) {
      const total = { steps: 0, sumSquares: 0, pairs: 0, sumProducts: 0 };
      for (let t = 0; t < tracks; t++) addSums(total, cveSumsOf(simulateAxis(random, settings, positions)));
      const estimate = cveFromSums(total, frameIntervalS, blur)!;
      expect(chooseEstimator(estimate.reducedError, frames).name).toBe('cve');
      const se = Math.sqrt(cveVariance(estimate.diffusion, estimate.reducedError, total.steps, tracks));
      const [low, high] = confidenceInterval(estimate.diffusion, se);
      if (low <= diffusion && diffusion <= high) covered++;
    }
    const [low, high] = clopperPearson(covered, dataSets);
    expect(low).toBeLessThanOrEqual(0.95);
    expect(high).toBeGreaterThanOrEqual(0.95);
  });
  it('the chosen estimator (MSD fit at optimal p) covers D 95 % of the time at x ≈ 5 (σ² = 5DΔt, t_E = 0)', monteCarlo, () => {
    // Michalet 2010 fit; SE from the exact MSD covariance with plug-in x̂; the choice follows chooseEstimator.
    const random = new Random(500_005);
    const settings = { diffusion, frameIntervalS, sigma: Math.sqrt(5 * diffusion * frameIntervalS), exposureS: 0 };
    const positions = new Float64Array(frames);
    const maxLag = 32;
    const ensemble = new Float64Array(maxLag);
    let covered = 0;
    let chosenMsd = 0;
    for (let set = 0; set < dataSets; set++) {
      const total = { steps: 0, sumSquares: 0, pairs: 0, sumProducts: 0 };
      ensemble.fill(0);
      for (let t = 0; t < tracks; t++) {
        simulateAxis(random, settings, positions);
        addSums(total, cveSumsOf(positions));
        const msd = timeAveragedMsd(positions, maxLag);
        for (let i = 0; i < maxLag; i++) ensemble[i] += msd[i] / tracks;
      }
      const pilot = cveFromSums(total, frameIntervalS, 0)!;
      const choice = chooseEstimator(Number.isFinite(pilot.reducedError) ? pilot.reducedError : 100, frames);
      let value: number;
      let se: number;
      if (choice.name === 'msd-fit') {
        chosenMsd++;
        const fit = msdFit(ensemble, choice.points, frameIntervalS, 0)!;
        const x = fit.localizationVariance / (fit.diffusion * frameIntervalS);
        value = fit.diffusion;
        se = (msdFitRelativeSe(x, frames, choice.points) * Math.abs(fit.diffusion)) / Math.sqrt(tracks);
      } else {
        value = pilot.diffusion;
        se = Math.sqrt(cveVariance(pilot.diffusion, pilot.reducedError, total.steps, tracks));
      }
      const [low, high] = confidenceInterval(value, se);
      if (low <= diffusion && diffusion <= high) covered++;
    }
    expect(chosenMsd).toBeGreaterThan(0.95 * dataSets);
    const [low, high] = clopperPearson(covered, dataSets);
    expect(low).toBeLessThanOrEqual(0.95);
    expect(high).toBeGreaterThanOrEqual(0.95);
  });
});
