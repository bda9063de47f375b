import { describe, expect, it } from 'vitest';
import { exposureAveragedPowerLaw } from '../../src/estimators/exposureAveragedPowerLaw.js';

/**
 * Direct numerical form of the general dynamic-error formula (Savin & Doyle 2005; estimators.md §1):
 * (1/t_E²)∫₀^{t_E}∫₀^{t_E}[γ(τ+ξ₁−ξ₂) − γ(ξ₁−ξ₂)] dξ₁dξ₂ with γ(t) = |t|^α, reduced to the
 * triangle-kernel integral ∫_{−t_E}^{t_E}(t_E − |u|)[γ(τ+u) − γ(u)]du/t_E², by Simpson's rule.
 */
function numericalG(lag: number, alpha: number, exposure: number): number {
  const intervals = 20_000;
  const h = (2 * exposure) / intervals;
  let sum = 0;
  for (let i = 0; i <= intervals; i++) {
    const u = -exposure + i * h;
    const f = (exposure - Math.abs(u)) * (Math.abs(lag + u) ** alpha - Math.abs(u) ** alpha);
    sum += f * (i === 0 || i === intervals ? 1 : i % 2 === 1 ? 4 : 2);
  }
  return (sum * h) / 3 / (exposure * exposure);
}

describe('exposureAveragedPowerLaw', () => {
  it('exposureAveragedPowerLaw(τ, 1, 1) gives 2/3 at τ = 1 and 5/3 at τ = 2', () => {
    // estimators.md §1 check values (power law K = 1, α = 1, t_E = Δt = 1)
    expect(exposureAveragedPowerLaw(1, 1, 1)).toBeCloseTo(2 / 3, 12);
    expect(exposureAveragedPowerLaw(2, 1, 1)).toBeCloseTo(5 / 3, 12);
  });
  it('exposureAveragedPowerLaw(τ, 1, t_E) is τ − t_E/3 (Savin & Doyle 2005 dynamic error)', () => {
    // estimators.md §1: ⟨Δx²⟩ = 2ε² + 2D(τ − t_E/3) for τ ≥ t_E; also on the series branch
    for (const lag of [0.5, 1, 3, 40, 1e4]) expect(exposureAveragedPowerLaw(lag, 1, 0.5)).toBeCloseTo(lag - 0.5 / 3, 9);
  });
  it('exposureAveragedPowerLaw matches direct integration of the general formula', () => {
    // Savin & Doyle 2005 general formula, integrated numerically. Simpson converges slowly at the
    // kinks of |t|^α (u = 0, u = −τ), so allow 1e-4 relative; a wrong term would be ≫ 1e-3.
    for (const alpha of [0.3, 0.5, 1.5, 1.9]) {
      for (const lag of [0.4, 1, 2, 7, 30]) {
        const expected = numericalG(lag, alpha, 1);
        expect(Math.abs(exposureAveragedPowerLaw(lag, alpha, 1) / expected - 1)).toBeLessThan(1e-4);
      }
    }
  });
  it('exposureAveragedPowerLaw(τ, α, 0) is τ^α', () => {
    // stroboscopic limit (estimators.md §1, t_E → 0)
    expect(exposureAveragedPowerLaw(2.5, 0.7, 0)).toBeCloseTo(2.5 ** 0.7, 14);
  });
  it('exposureAveragedPowerLaw is continuous where the series branch starts (t_E/τ = 0.05)', () => {
    // common practice, no source: the two branches must agree at the switch
    for (const alpha of [0.5, 1.5]) {
      const below = exposureAveragedPowerLaw(20 * (1 + 1e-9), alpha, 1);
      const above = exposureAveragedPowerLaw(20 * (1 - 1e-9), alpha, 1);
      // the inputs differ by 2e-9 relative, so the outputs may differ by ≈ α·2e-9; a wrong series
      // term would show at the 1e-4 level
      expect(Math.abs(below / above - 1)).toBeLessThan(1e-7);
    }
  });
});
