import { describe, expect, it } from 'vitest';
import type { Report } from '../../src/report.js';
import { msdColumns, msdModelOf } from '../../web/src/msdColumns.js';

/** A report with only what the MSD chart reads (CONTRACTS §3 field names). */
function reportWith(over: Partial<Record<string, unknown>> = {}): Report {
  return {
    provenance: { version: '0', options: { frameInterval: 0.05 }, generated: '' },
    input: { rows: 0, rejectedRows: 0, frames: 0, tracks: 0, rejected: [], dims: 2 },
    diffusion: {
      coefficient: { value: 0.44, ci95: [0.43, 0.45] },
      estimator: { name: 'cve', reason: '' },
      perAxis: { x: null, y: null },
      localizationError: { value: 0.03, ci95: [0.028, 0.032] },
      localizationVariance: { value: 0.0009, se: 0.0001 },
      blur: 1 / 30,
      exponent: null,
      reducedError: null,
      driftCorrection: { method: 'none', reason: '' },
    },
    msd: [
      { lag: 0.1, value: 0.18, se: 0.002, count: 10 },
      { lag: 0.05, value: 0.09, se: 0.001, count: 10 },
      { lag: 0.2, value: -0.01, se: 0.5, count: 3 },
    ],
    tracks: [],
    heterogeneity: { alpha2: null },
    drift: { velocity: null },
    vibration: { peaks: [] },
    temperature: { reported: 21, implied: null, expectedDiffusion: { value: 0.441, sd: 0.009 } },
    size: { impliedRadius: null },
    alerts: [],
    segments: [],
    ...over,
  } as Report;
}

describe('msdColumns', () => {
  it('sorts by lag and sends non-positive MSD as null gaps (log axes)', () => {
    const [lag, msd, low, high] = msdColumns(reportWith());
    expect(lag).toEqual([0.05, 0.1, 0.2]);
    expect(msd).toEqual([0.09, 0.18, null]);
    expect(low[0]).toBeCloseTo(0.089, 12);
    expect(high[1]).toBeCloseTo(0.182, 12);
    expect(low[2]).toBeNull();
  });

  // estimators.md §1 model (Berglund 2010): 2d·D·τ + 2d·σ² − 4d·R·D·Δt
  it('draws the fitted line from D, σ² and blur R of the report', () => {
    const fit = msdColumns(reportWith())[4];
    const expected = (lag: number) => 4 * 0.44 * lag + 4 * 0.0009 - 8 * (1 / 30) * 0.44 * 0.05;
    expect(fit[0]).toBeCloseTo(expected(0.05), 12);
    expect(fit[2]).toBeCloseTo(expected(0.2), 12);
  });

  // Stokes-Einstein band as the brief asks: 2d·D_SE·τ with ± 1.96 sd
  it('gives the Stokes-Einstein expectation 2d·D_SE·τ with a ± 1.96 sd band', () => {
    const cols = msdColumns(reportWith());
    expect(cols[5][1]).toBeCloseTo(4 * 0.441 * 0.1, 12);
    expect(cols[6][1]).toBeCloseTo(4 * (0.441 - 1.96 * 0.009) * 0.1, 12);
    expect(cols[7][1]).toBeCloseTo(4 * (0.441 + 1.96 * 0.009) * 0.1, 12);
  });

  it('leaves the fit empty before any D estimate, and falls back to σ² = σ²(localizationError)', () => {
    const none = reportWith();
    none.diffusion.coefficient = null;
    expect(msdModelOf(none)).toBeNull();
    expect(msdColumns(none)[4]).toEqual([null, null, null]);
    const r = reportWith();
    delete (r.diffusion as Record<string, unknown>).localizationVariance;
    expect(msdModelOf(r)?.localizationVariance).toBeCloseTo(0.0009, 12);
  });
});
