import { describe, expect, it } from 'vitest';
import { msdModel } from '../../web/src/msdModel.js';

describe('msdModel', () => {
  // estimators.md §1 check values [C], from Berglund 2010 (Phys. Rev. E 82, 011917), eq. for
  // MSD(nΔt) = 2d·D·Δt·(n + σ²/(DΔt) − 2R)
  it('gives 8/3 and 20/3 at lags 1 and 2 for d = 2, D = 1, Δt = 1, σ = 0, R = 1/6', () => {
    const m = { diffusion: 1, localizationVariance: 0, blur: 1 / 6, frameInterval: 1, dims: 2 };
    expect(msdModel(m, 1)).toBeCloseTo(8 / 3, 12);
    expect(msdModel(m, 2)).toBeCloseTo(20 / 3, 12);
  });

  // estimators.md §1 check values [C] (Monte Carlo there gave 1.8472)
  it('gives 1.8467 at lag 1 for d = 1, D = 1, Δt = 1, σ = 0.3, t_E = 0.5 (R = 1/12)', () => {
    const m = { diffusion: 1, localizationVariance: 0.09, blur: 1 / 12, frameInterval: 1, dims: 1 };
    expect(msdModel(m, 1)).toBeCloseTo(1.8467, 4);
  });

  // Savin & Doyle 2005 (Biophys. J. 88, 623; reference from memory), per axis MSD(τ) = 2D(τ − t_E/3) + 2σ² for uniform exposure t_E
  it('matches the Savin–Doyle blur form with R = t_E/(6Δt)', () => {
    const D = 0.44;
    const dt = 0.05;
    const tE = 0.01;
    const s2 = 0.001;
    for (const lag of [0.05, 0.4, 6.4]) {
      const m = { diffusion: D, localizationVariance: s2, blur: tE / (6 * dt), frameInterval: dt, dims: 1 };
      expect(msdModel(m, lag)).toBeCloseTo(2 * D * (lag - tE / 3) + 2 * s2, 12);
    }
  });
});
