import { describe, expect, it } from 'vitest';
import { exposureTransfer, stepTransfer } from '../../../src/detectors/vibration/vibrationTransfer.js';

describe('stepTransfer', () => {
  it('stepTransfer(f, Δt) = 2|sin(πfΔt)|, the gain of x_n − x_{n−1}', () => {
    // Difference filter gain |1 − e^{−iωΔt}| = 2|sin(ωΔt/2)| (common practice, no source)
    expect(stepTransfer(25, 0.01)).toBeCloseTo(Math.SQRT2, 12);
    expect(stepTransfer(50, 0.01)).toBeCloseTo(2, 12);
    // A direct check: the step of cos(ωt) between two frames
    const f = 13.7;
    const dt = 0.01;
    let peak = 0;
    for (let n = 1; n < 2000; n++) peak = Math.max(peak, Math.abs(Math.cos(2 * Math.PI * f * n * dt) - Math.cos(2 * Math.PI * f * (n - 1) * dt)));
    expect(peak).toBeCloseTo(stepTransfer(f, dt), 3);
  });
  it('stepTransfer is the same at every alias', () => {
    // |sin(πfΔt)| has period 1/Δt and is even (common practice, no source)
    expect(stepTransfer(130, 0.01)).toBeCloseTo(stepTransfer(30, 0.01), 12);
    expect(stepTransfer(70, 0.01)).toBeCloseTo(stepTransfer(30, 0.01), 12);
  });
});

describe('exposureTransfer', () => {
  it('exposureTransfer(f, τ_e) = |sinc(πfτ_e)|', () => {
    // estimators.md §10: A_eff = A·|sin(ωt_E/2)/(ωt_E/2)|
    expect(exposureTransfer(50, 0.01)).toBeCloseTo(2 / Math.PI, 12);
    expect(exposureTransfer(0, 0.01)).toBe(1);
    expect(exposureTransfer(13.7, 0)).toBe(1);
  });
  it('exposureTransfer vanishes at multiples of 1/τ_e: 60 Hz at τ_e = 1/60 s is invisible', () => {
    // detectors.md §2: 60 Hz vibration at 30 fps with τ_e = 33 ms is invisible [M]
    expect(exposureTransfer(60, 1 / 30)).toBeLessThan(1e-12);
    expect(exposureTransfer(100, 0.01)).toBeLessThan(1e-12);
  });
  it('exposureTransfer equals the numerical average of cos over the exposure', () => {
    // Definition of the exposure average (common practice, no source): mean of cos(ωt) over [−τ/2, τ/2]
    const f = 37;
    const te = 0.008;
    let sum = 0;
    const n = 100000;
    for (let i = 0; i < n; i++) sum += Math.cos(2 * Math.PI * f * (-te / 2 + ((i + 0.5) * te) / n));
    expect(sum / n).toBeCloseTo(exposureTransfer(f, te), 6);
  });
});
