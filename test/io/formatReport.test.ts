import { describe, expect, it } from 'vitest';
import type { Report } from '../../src/report.js';
import { formatReport } from '../../tools/cli/formatReport.js';

/** A hand-built report of an invented run (bench 7, 0.5 µm-radius beads in water, 22 °C). */
function sampleReport(): Report {
  return {
    provenance: { version: '0.1.0', options: { pixelSize: 0.065, frameInterval: 0.01, radius: 0.5, medium: 'water' }, generated: '2026-03-02T10:15:00.000Z' },
    input: {
      rows: 120_000,
      rejectedRows: 3,
      frames: 6000,
      tracks: 25,
      rejected: [
        { line: 17, reason: 'field x is not a number', text: '0.16,abc,12.5' },
        { line: 904, reason: 'time goes backwards', text: '8.99,10.2,11.7' },
        { line: 5001, reason: 'wrong number of fields', text: '50,1' },
      ],
    },
    diffusion: {
      coefficient: { value: 0.43612, ci95: [0.42103, 0.45187] },
      estimator: { name: 'cve', reason: 'reduced error x = 0.31 is below 1', msdPoints: 2 },
      perAxis: { x: { value: 0.4402, ci95: [0.419, 0.4621] }, y: { value: 0.432, ci95: [0.411, 0.4537] } },
      localizationError: { value: 0.02134, ci95: [0.0201, 0.0226] },
      exponent: { value: 0.993, ci95: [0.981, 1.005] },
      reducedError: 0.3081,
      driftCorrection: { method: 'fitted', reason: 'drift CUSUM crossed on x' },
    },
    msd: Array.from({ length: 100 }, (_, k) => ({ lag: (k + 1) * 0.01, value: 4 * 0.436 * (k + 1) * 0.01 + 4 * 0.0213 ** 2, se: 0.0012 * Math.sqrt(k + 1), count: 100_000 - 900 * k })),
    tracks: Array.from({ length: 25 }, (_, k) => ({ id: k + 1, frames: 100 + 10 * k, start: k * 0.5, end: k * 0.5 + (100 + 10 * k) * 0.01, D: { value: 0.43 + 0.001 * k, ci95: [0.38 + 0.001 * k, 0.48 + 0.001 * k] as [number, number] } })),
    heterogeneity: { alpha2: { value: 0.0123, se: 0.0081 } },
    drift: { velocity: { value: [0.01234, -0.00061], ci95: [[0.0111, 0.0136], [-0.0019, 0.0007]] } },
    vibration: { peaks: [{ frequency: 49.5, amplitude: 0.0123, axis: 'x', aliasesHz: [50.5, 149.5] }] },
    temperature: { reported: 22, implied: { value: 22.61, ci95: [21.93, 23.3] } },
    size: { impliedRadius: { value: 0.4931, ci95: [0.4772, 0.5093] } },
    alerts: [
      { id: 'a1', kind: 'drift', level: 'warn', start: 12.5, end: 30, message: 'stage drifting 0.012 µm/s along x', detail: {} },
      { id: 'a2', kind: 'timing', level: 'info', start: 8.99, end: null, message: '1 row with time going backwards', detail: {} },
    ],
    segments: [
      { label: 'settled', start: 0, end: 30, note: 'heater on, waited 10 min', diffusion: { value: 0.4351, ci95: [0.412, 0.459] } },
      { label: 'bump', start: 31.2, end: null, note: '', diffusion: null },
    ],
  };
}

describe('formatReport', () => {
  it('formatReport(report) starts with a header line naming version and time', () => {
    // CONTRACTS.md §3 provenance { version, generated }.
    const text = formatReport(sampleReport());
    expect(text.split('\n')[0]).toBe('jostle report — jostle 0.1.0, generated 2026-03-02T10:15:00.000Z');
    expect(text).toContain('settings: pixelSize=0.065, frameInterval=0.01, radius=0.5, medium=water');
  });

  it('formatReport(report) rounds D and its CI per GUM §7.2.6 with units', () => {
    // JCGM 100:2008 (GUM) §7.2.6: uncertainty to at most two significant digits, value to match.
    // Half-width (0.45187 − 0.42103)/2 = 0.01542 → 0.015, last digit 0.001 → 0.436 [0.421, 0.452].
    const text = formatReport(sampleReport());
    expect(text).toMatch(/^ {2}D +0\.436 \[0\.421, 0\.452\] µm²\/s \(95 % CI\)$/m);
    expect(text).toMatch(/σ \(per axis\) +0\.0213 \[0\.0201, 0\.0226\] µm/);
    expect(text).toMatch(/α \(exponent\) +0\.993 \[0\.981, 1\.005\]/);
    expect(text).toMatch(/x = σ²\/\(D·Δt\) +0\.308/);
    expect(text).toMatch(/α₂ \(non-Gaussian\) +0\.0123 ± 0\.0081 \(SE\)/);
    expect(text).toContain('covariance-based estimator (Vestergaard, Blainey & Flyvbjerg 2014)');
    expect(text).toContain('reduced error x = 0.31 is below 1');
  });

  it('formatReport(report) gives per-axis D, drift, vibration, temperature and radius', () => {
    // CONTRACTS.md §3 fields; GUM §7.2.6 rounding.
    const text = formatReport(sampleReport());
    expect(text).toMatch(/D along x +0\.440 \[0\.419, 0\.462\] µm²\/s/);
    expect(text).not.toMatch(/D along z/);
    expect(text).toMatch(/vx +0\.0123 \[0\.0111, 0\.0136\] µm\/s/);
    expect(text).toMatch(/vy +-0\.0006 \[-0\.0019, 0\.0007\] µm\/s/);
    expect(text).toMatch(/49\.50 +0\.0123 +x +50\.50, 149\.5/);
    expect(text).toMatch(/reported +22\.00 °C/);
    expect(text).toMatch(/implied by D +22\.61 \[21\.93, 23\.30\] °C/); // half-width 0.685 → 0.68: two decimals
    expect(text).toMatch(/implied − reported +0\.61 \[-0\.07, 1\.30\] K/);
    expect(text).toMatch(/implied radius +0\.493 \[0\.477, 0\.509\] µm/);
  });

  it('formatReport(report) lists input counts, rejected rows, alerts and segments', () => {
    // CONTRACTS.md §2 (rejected rows quoted with line numbers) and §3 (alerts, segments).
    const text = formatReport(sampleReport());
    expect(text).toContain('rows read 120000, rejected 3 (0.00250 %); frames 6000; tracks 25');
    expect(text).toContain('line 17: field x is not a number — "0.16,abc,12.5"');
    expect(text).toMatch(/WARN +drift +12\.5 +30 +stage drifting 0\.012 µm\/s along x/);
    expect(text).toMatch(/INFO +timing +8\.99 +open +1 row with time going backwards/);
    expect(text).toMatch(/settled +0 +30 +0\.435 \[0\.412, 0\.459\] +heater on, waited 10 min/);
    expect(text).toMatch(/bump +31\.2 +point +n\/a/);
  });

  it('formatReport(report) thins a long MSD table to log-spaced lags and lists the first tracks', () => {
    // common practice, no source: log-spaced lags summarise an MSD curve.
    const text = formatReport(sampleReport(), { maxMsdRows: 10, maxTracks: 3 });
    expect(text).toContain('Ensemble MSD, drift-corrected (10 of 100 lags)');
    expect(text).toMatch(/^ +lag s +MSD µm² +SE µm² +count$/m);
    expect(text).toMatch(/^ +0\.01 +0\.0193 +0\.0012 +100000$/m);
    expect(text).toMatch(/^ +1 +1\.75 +0\.012 +10900$/m);
    expect(text).toContain('Tracks (25; first 3)');
    expect(text).toContain('frames per track: median 220, shortest 100, longest 340');
    expect(text).toMatch(/^ +3 +120 +1 +2\.2 +0\.432 \[0\.382, 0\.482\]$/m);
    expect(text).not.toMatch(/^ +4 +130 /m);
  });

  it('formatReport(report) says what is missing when estimates are null', () => {
    // CONTRACTS.md §3: implied temperature/radius are null without --radius or a temperature.
    const report = sampleReport();
    report.diffusion.coefficient = null;
    report.diffusion.estimator = null;
    report.temperature = { reported: null, implied: null };
    report.size = { impliedRadius: null };
    report.drift = { velocity: null };
    report.vibration = { peaks: [] };
    report.alerts = [];
    report.msd = [];
    report.tracks = [];
    const text = formatReport(report);
    expect(text).toMatch(/^ {2}D +not available \(too little data\)$/m);
    expect(text).toMatch(/reported +not given/);
    expect(text).toMatch(/implied by D +not available \(needs --radius and a temperature-dependent medium\)/);
    expect(text).toContain('no peak detected');
    expect(text).toContain('Alerts (0)');
    expect(text).not.toContain('implied − reported');
  });

  it('formatReport(report) does not change the report', () => {
    // STYLE.md §15: freeze inputs to prove they are not mutated.
    const report = sampleReport();
    const frozen = structuredClone(report);
    formatReport(Object.freeze(report));
    expect(report).toEqual(frozen);
  });
});
