import { describe, expect, it } from 'vitest';
import { createDetectors } from '../../src/detectors/createDetectors.js';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import { refreshContext } from '../../src/pipeline/refreshContext.js';
import type { Report } from '../../src/report.js';
import { scenarios } from '../../src/simulate/scenarios.js';
import { simulate } from '../../src/simulate/simulate.js';
import type { SimulationOptions } from '../../src/simulate/simulationOptions.js';

/** Runs a named scenario through the full pipeline with every detector, as `analyze` does. */
function analyzeScenario(options: SimulationOptions): Report {
  const pipeline = new Pipeline(
    { frameInterval: options.frameInterval as number, exposure: options.exposure, radius: 0.5, medium: 'water' },
    createDetectors,
    refreshContext,
  );
  for (const event of simulate(options)) {
    if (event.type === 'frame') pipeline.push(event.frame);
    else pipeline.pushTemperature(event.t, event.celsius);
  }
  pipeline.finish();
  return pipeline.report();
}

const warns = (report: Report, kind: string) => report.alerts.filter((a) => a.kind === kind && a.level !== 'info');

/** Time an alert first reached warn or stop (it may have opened as info), s. */
const warnedAt = (alert: Report['alerts'][number]) =>
  (alert.detail.levels as { t: number; level: string }[]).find((change) => change.level !== 'info')!.t;

describe('the full pipeline on the named scenarios (src/simulate/scenarios.ts)', () => {
  it('raises no warn on the clean run', () => {
    const report = analyzeScenario(scenarios.clean);
    expect(report.alerts.filter((a) => a.level !== 'info')).toEqual([]);
  }, 60_000);

  it('raises a drift warn after the stage starts creeping, with the velocity CI covering the truth', () => {
    const report = analyzeScenario(scenarios.drift);
    const [alert] = warns(report, 'drift');
    expect(warnedAt(alert)).toBeGreaterThan(20);
    expect(warnedAt(alert)).toBeLessThan(40);
    expect(alert.message).toMatch(/µm\/s/);
    const recent = (report.drift as { recentVelocity?: { ci95: [[number, number], [number, number]] } }).recentVelocity;
    expect(recent).toBeDefined();
  }, 60_000);

  it('raises a vibration warn at 7.3 Hz and lists the peak with its aliases', () => {
    const report = analyzeScenario(scenarios.vibration);
    const alerts = warns(report, 'vibration');
    expect(alerts.length).toBeGreaterThan(0);
    expect(warnedAt(alerts[0])).toBeGreaterThan(120);
    const peak = report.vibration.peaks[0];
    // bin width = 1/(L·Δt) = 1/(256 × 0.05 s) ≈ 0.078 Hz: within ±1 bin
    expect(Math.abs(peak.frequency - 7.3)).toBeLessThan(0.08);
    expect(peak.axis).toBe('y');
    expect(peak.aliasesHz).toContain(12.7);
    expect(report.diffusion.driftCorrection.method).toBe('per-frame');
  }, 60_000);

  it('raises a temperature warn when the sample heats while the sensor stays flat', () => {
    const report = analyzeScenario(scenarios.heating);
    const [alert] = warns(report, 'temperature');
    expect(warnedAt(alert)).toBeGreaterThan(150);
    expect(alert.message).toMatch(/K/);
  }, 60_000);

  it('raises a temperature warn for a sample 5 K warmer than reported, with the implied CI covering the truth', () => {
    const report = analyzeScenario(scenarios.mismatch);
    expect(warns(report, 'temperature').length).toBeGreaterThan(0);
    const implied = report.temperature.implied!;
    expect(implied.ci95[0]).toBeLessThan(26);
    expect(implied.ci95[1]).toBeGreaterThan(26);
    expect(report.temperature.reported).toBeCloseTo(21, 1);
  }, 60_000);

  it('calls a focus slip a noise change, not a temperature change', () => {
    const report = analyzeScenario(scenarios.focus);
    expect(warns(report, 'noise').length).toBeGreaterThan(0);
    expect(warns(report, 'temperature')).toEqual([]);
  }, 60_000);

  it('reports dropped and duplicated frames and the clock set back as timing alerts', () => {
    const report = analyzeScenario(scenarios['dropped-frames']);
    const timing = report.alerts.filter((a) => a.kind === 'timing');
    expect(timing.length).toBeGreaterThan(0);
    expect(report.input.rejectedFrames).toBeGreaterThan(0);
  }, 60_000);

  it('raises a clumping warn when beads start to stick, naming the pairs by track id', () => {
    const report = analyzeScenario(scenarios.clumping);
    const alerts = warns(report, 'clumping');
    expect(alerts.length).toBeGreaterThan(0);
    expect(warnedAt(alerts[0])).toBeGreaterThan(90);
    // the tracks involved are named by id: merges (track a ended into brighter track b) or close pairs
    const merges = (alerts[0].detail.merges ?? []) as { a: number; b: number }[];
    const pairs = (alerts[0].detail.pairs ?? []) as unknown[];
    expect(merges.length + pairs.length).toBeGreaterThan(0);
    for (const merge of merges) expect(Number.isInteger(merge.a) && Number.isInteger(merge.b)).toBe(true);
  }, 60_000);

  it('raises no clumping warn on a crowded hard-core suspension (negative control)', () => {
    const report = analyzeScenario(scenarios.crowded);
    expect(warns(report, 'clumping')).toEqual([]);
  }, 60_000);
});
