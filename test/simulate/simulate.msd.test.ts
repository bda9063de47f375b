import { describe, expect, it } from 'vitest';
import { simulate } from '../../src/simulate/simulate.js';
import { perAxisMsd, trackTable, type TrackTable } from './trackTable.js';

/** Standard error of the per-axis MSD at a lag, from 25 batches of tracks (batch means). */
function batchStandardError(table: TrackTable, lag: number): number {
  const batches = 25;
  const values: number[] = [];
  for (let b = 0; b < batches; b++) values.push(perAxisMsd(table, lag, (key) => key % batches === b).value);
  const mean = values.reduce((s, v) => s + v, 0) / batches;
  const variance = values.reduce((s, v) => s + (v - mean) ** 2, 0) / (batches - 1);
  return Math.sqrt(variance / batches);
}

// Expected MSD with blur and localization error, per axis (d = 1):
// MSD(nΔt) = 2D·nΔt + 2σ² − 4R·D·Δt with R = t_E/(6Δt) — Savin & Doyle, Biophys. J. 88, 623 (2005);
// check values from estimators.md §1 [C].
function expectedMsd(D: number, dt: number, sigma: number, exposure: number, n: number): number {
  return 2 * D * n * dt + 2 * sigma * sigma - (4 * exposure * D) / 6;
}

describe('simulate(options): MSD with motion blur and localization error', () => {
  it('gives MSD₁ = 1.8333 and MSD₅ = 9.8333 per axis at D = 1, Δt = 1, σ = 0.5, t_E = Δt (within 0.5 %)', { timeout: 60_000 }, () => {
    // estimators.md §1 check values: 1.8333, 9.8333 (Monte Carlo there: 1.8329, 9.8307; ≈ 0.5 % for MC tests)
    expect(expectedMsd(1, 1, 0.5, 1, 1)).toBeCloseTo(1.8333, 4);
    expect(expectedMsd(1, 1, 0.5, 1, 5)).toBeCloseTo(9.8333, 4);
    const run = simulate({
      seed: 424242,
      frames: 2500,
      frameInterval: 1,
      exposure: 1,
      diffusion: 1,
      localizationError: 0.5,
      particles: 600,
      field: { width: 3000, height: 3000 },
    });
    const table = trackTable(run, 'id');
    const msd1 = perAxisMsd(table, 1);
    const msd5 = perAxisMsd(table, 5);
    expect(msd1.count).toBeGreaterThan(2_500_000);
    expect(Math.abs(msd1.value / 1.8333 - 1)).toBeLessThan(0.005);
    expect(Math.abs(msd5.value / 9.8333 - 1)).toBeLessThan(0.005);
    // the sample is big enough for 0.5 % to mean something: 3 batch SE of MSD₅ stay inside it
    expect((3 * batchStandardError(table, 5)) / 9.8333).toBeLessThan(0.005);
    // and not the unblurred values 2.5 and 10.5 (the blur term is really there)
    expect(msd1.value).toBeLessThan(2.4);
  });

  it('gives the same MSD₁ = 1.8333 when the path is averaged over 20 sub-steps (alwaysSubStep)', { timeout: 60_000 }, () => {
    // estimators.md §1 check value; the whole-window draw and 20 exact sub-windows have the same law
    const run = simulate({
      seed: 31337,
      frames: 600,
      frameInterval: 1,
      exposure: 1,
      diffusion: 1,
      localizationError: 0.5,
      particles: 250,
      field: { width: 3000, height: 3000 },
      alwaysSubStep: true,
    });
    const msd1 = perAxisMsd(trackTable(run, 'id'), 1);
    expect(Math.abs(msd1.value / 1.8333 - 1)).toBeLessThan(0.005);
  });

  it('gives MSD₁ = 1.8467 per axis at σ = 0.3, t_E = 0.5 Δt (R = 1/12)', { timeout: 60_000 }, () => {
    // estimators.md §1 check value 1.8467 (Monte Carlo there: 1.8472)
    const run = simulate({
      seed: 777,
      frames: 800,
      frameInterval: 1,
      exposure: 0.5,
      diffusion: 1,
      localizationError: 0.3,
      particles: 300,
      field: { width: 3000, height: 3000 },
    });
    const msd1 = perAxisMsd(trackTable(run, 'id'), 1);
    expect(Math.abs(msd1.value / 1.8467 - 1)).toBeLessThan(0.005);
  });
});
