import type { Alert, Estimate, Report } from '../../src/report.js';

/** Options of `formatReport`; limits on how much of the long lists is printed. */
export interface FormatReportOptions {
  /** Tracks listed in the per-track summary (default 10; all are counted). */
  maxTracks?: number;
  /** MSD rows printed (default 30); longer curves are thinned to log-spaced lags, first and last kept. */
  maxMsdRows?: number;
  /** Rejected rows quoted (default 10). */
  maxRejected?: number;
}

const ESTIMATOR_NAMES: Record<string, string> = {
  cve: 'covariance-based estimator (Vestergaard, Blainey & Flyvbjerg 2014)',
  'msd-fit': 'least-squares fit to the MSD at the best number of lags (Michalet 2010)',
};

const INDENT = '  ';

/**
 * The readable text report of `jostle analyze` (without `--json`): a header line, then input
 * counts with the rejected rows quoted, diffusion (D with its 95 % CI, the estimator and why, per
 * axis, σ, α, the reduced error x), drift, vibration peaks with their aliases, temperature
 * reported vs implied, implied radius, alerts, segments, the ensemble MSD table and a per-track
 * summary. Every number carries its unit.
 *
 * Rounding follows JCGM 100:2008 (GUM) §7.2.6: an interval's half-width is given to two
 * significant digits and the value and bounds to the same decimal place; a value without an
 * interval gets three significant digits. Very large or small magnitudes use e-notation.
 * Missing quantities (null) print as `not available` with what they need.
 *
 * Complexity: O(alerts + segments + maxTracks + maxMsdRows).
 *
 * @param report the report of CONTRACTS §3 (src/report.ts)
 * @param options list limits
 * @returns the text, lines ending in `\n`
 *
 * @example
 * process.stdout.write(formatReport(report));
 * // jostle report — jostle 0.1.0, generated 2026-03-02T10:15:00.000Z
 * // ...
 * //   D                   0.436 [0.421, 0.452] µm²/s (95 % CI)
 */
export function formatReport(report: Report, options: FormatReportOptions = {}): string {
  const maxTracks = options.maxTracks ?? 10;
  const maxMsdRows = options.maxMsdRows ?? 30;
  const maxRejected = options.maxRejected ?? 10;
  for (const [name, value] of [['maxTracks', maxTracks], ['maxMsdRows', maxMsdRows], ['maxRejected', maxRejected]] as const) {
    if (!(Number.isInteger(value) && value >= 0)) throw new RangeError(`formatReport requires ${name} to be a non-negative integer`);
  }
  const out: string[] = [];
  const { provenance, input, diffusion } = report;
  out.push(`jostle report — jostle ${provenance.version}, generated ${provenance.generated}`);
  const settings = Object.entries(provenance.options ?? {})
    .map(([key, value]) => `${key}=${typeof value === 'string' ? value : JSON.stringify(value)}`)
    .join(', ');
  if (settings) out.push(`${INDENT}settings: ${settings}`);

  // Input.
  section(out, 'Input');
  const rejectedShare = input.rows > 0 ? ` (${formatNumber((100 * input.rejectedRows) / input.rows)} %)` : '';
  out.push(`${INDENT}rows read ${input.rows}, rejected ${input.rejectedRows}${rejectedShare}; frames ${input.frames}; tracks ${input.tracks}`);
  if (input.rejected.length > 0) {
    const shown = input.rejected.slice(0, maxRejected);
    out.push(`${INDENT}rejected rows (first ${shown.length} of ${input.rejectedRows}):`);
    for (const row of shown) out.push(`${INDENT}${INDENT}line ${row.line}: ${row.reason} — ${JSON.stringify(row.text)}`);
  }

  // Diffusion.
  section(out, 'Diffusion');
  const lines: [string, string][] = [];
  lines.push(['D', withInterval(diffusion.coefficient, 'µm²/s', 'not available (too little data)')]);
  if (diffusion.estimator) {
    const name = ESTIMATOR_NAMES[diffusion.estimator.name] ?? diffusion.estimator.name;
    const points = diffusion.estimator.msdPoints !== undefined ? `, ${diffusion.estimator.msdPoints} MSD points` : '';
    lines.push(['estimator', `${diffusion.estimator.name}: ${name}${points}`]);
    lines.push(['  chosen because', diffusion.estimator.reason]);
  } else {
    lines.push(['estimator', 'none (too little data)']);
  }
  const axes = diffusion.perAxis;
  lines.push(['D along x', withInterval(axes.x, 'µm²/s')]);
  lines.push(['D along y', withInterval(axes.y, 'µm²/s')]);
  if (axes.z !== undefined) lines.push(['D along z', withInterval(axes.z, 'µm²/s')]);
  lines.push(['σ (per axis)', withInterval(diffusion.localizationError, 'µm')]);
  lines.push(['α (exponent)', withInterval(diffusion.exponent, '(1 = free diffusion)')]);
  lines.push(['x = σ²/(D·Δt)', diffusion.reducedError === null ? 'not available' : formatNumber(diffusion.reducedError)]);
  lines.push(['drift correction', `${diffusion.driftCorrection.method}: ${diffusion.driftCorrection.reason}`]);
  const alpha2 = report.heterogeneity.alpha2;
  lines.push(['α₂ (non-Gaussian)', alpha2 === null ? 'not available' : `${withStandardError(alpha2.value, alpha2.se)} (first lag; 0 for Gaussian steps)`]);
  out.push(...aligned(lines));

  // Drift.
  section(out, 'Drift');
  const drift = report.drift.velocity;
  if (drift === null) out.push(`${INDENT}velocity not available`);
  else {
    const method = typeof report.drift.method === 'string' ? report.drift.method : 'net common-mode displacement / duration';
    out.push(
      ...aligned([
        ['vx', withInterval({ value: drift.value[0], ci95: drift.ci95[0] }, 'µm/s')],
        ['vy', withInterval({ value: drift.value[1], ci95: drift.ci95[1] }, 'µm/s')],
        ['method', method],
      ]),
    );
  }

  // Vibration.
  section(out, 'Vibration');
  if (report.vibration.peaks.length === 0) out.push(`${INDENT}no peak detected`);
  else {
    out.push(
      ...table(
        ['frequency Hz', 'amplitude µm (0-peak)', 'axis', 'aliases Hz'],
        report.vibration.peaks.map((peak) => [
          formatNumber(peak.frequency, 4),
          formatNumber(peak.amplitude),
          peak.axis,
          peak.aliasesHz.length > 0 ? peak.aliasesHz.map((f) => formatNumber(f, 4)).join(', ') : '—',
        ]),
        [true, true, false, false],
      ),
    );
  }

  // Temperature and size.
  section(out, 'Temperature and size');
  const temperature = report.temperature;
  const reported = temperature.reported === null ? 'not given' : `${formatNumber(temperature.reported, 4)} °C`;
  const temperatureLines: [string, string][] = [['reported', reported]];
  temperatureLines.push([
    'implied by D',
    withInterval(temperature.implied, '°C', 'not available (needs --radius and a temperature-dependent medium)'),
  ]);
  if (temperature.implied !== null && temperature.reported !== null) {
    const difference = temperature.implied.value - temperature.reported;
    temperatureLines.push([
      'implied − reported',
      withInterval(
        { value: difference, ci95: [temperature.implied.ci95[0] - temperature.reported, temperature.implied.ci95[1] - temperature.reported] },
        'K',
      ),
    ]);
  }
  temperatureLines.push(['implied radius', withInterval(report.size.impliedRadius, 'µm', 'not available (needs a reported temperature)')]);
  out.push(...aligned(temperatureLines));

  // Alerts.
  section(out, `Alerts (${report.alerts.length})`);
  if (report.alerts.length === 0) out.push(`${INDENT}none`);
  else out.push(...table(['level', 'kind', 'start s', 'end s', 'message'], report.alerts.map(alertRow), [false, false, true, true, false]));

  // Segments.
  section(out, `Segments (${report.segments.length})`);
  if (report.segments.length === 0) out.push(`${INDENT}none (no tags with an end)`);
  else {
    out.push(
      ...table(
        ['label', 'start s', 'end s', 'D µm²/s [95 % CI]', 'note'],
        report.segments.map((segment) => [
          segment.label,
          formatTime(segment.start),
          segment.end === null ? 'point' : formatTime(segment.end),
          withInterval(segment.diffusion, '', 'n/a', false),
          shorten(segment.note, 40),
        ]),
        [false, true, true, true, false],
      ),
    );
  }

  // Ensemble MSD.
  const msdRows = thin(report.msd.length, maxMsdRows);
  section(out, `Ensemble MSD, drift-corrected (${msdRows.length === report.msd.length ? report.msd.length : `${msdRows.length} of ${report.msd.length}`} lags)`);
  if (report.msd.length === 0) out.push(`${INDENT}none`);
  else {
    out.push(
      ...table(
        ['lag s', 'MSD µm²', 'SE µm²', 'count'],
        msdRows.map((k) => {
          const point = report.msd[k];
          return [formatTime(point.lag), formatNumber(point.value), formatNumber(point.se, 2), String(point.count)];
        }),
        [true, true, true, true],
      ),
    );
  }

  // Tracks.
  const shownTracks = report.tracks.slice(0, maxTracks);
  section(out, `Tracks (${report.tracks.length}${shownTracks.length < report.tracks.length ? `; first ${shownTracks.length}` : ''})`);
  if (report.tracks.length === 0) out.push(`${INDENT}none`);
  else {
    const frameCounts = report.tracks.map((track) => track.frames).sort((a, b) => a - b);
    const median = frameCounts.length % 2 === 1
      ? frameCounts[(frameCounts.length - 1) / 2]
      : (frameCounts[frameCounts.length / 2 - 1] + frameCounts[frameCounts.length / 2]) / 2;
    out.push(`${INDENT}frames per track: median ${formatNumber(median)}, shortest ${frameCounts[0]}, longest ${frameCounts[frameCounts.length - 1]}`);
    out.push(
      ...table(
        ['id', 'frames', 'start s', 'end s', 'D µm²/s [95 % CI]'],
        shownTracks.map((track) => [
          String(track.id),
          String(track.frames),
          formatTime(track.start),
          formatTime(track.end),
          withInterval(track.D, '', 'n/a', false),
        ]),
        [true, true, true, true, true],
      ),
    );
  }
  return out.join('\n') + '\n';
}

function section(out: string[], title: string): void {
  out.push('', title);
}

function alertRow(alert: Alert): string[] {
  return [
    alert.level.toUpperCase(),
    alert.kind,
    formatTime(alert.start),
    alert.end === null ? 'open' : formatTime(alert.end),
    alert.message,
  ];
}

/** Label/value lines with the values aligned. */
function aligned(lines: [string, string][]): string[] {
  const width = Math.max(...lines.map(([label]) => label.length));
  return lines.map(([label, value]) => `${INDENT}${label.padEnd(width)}  ${value}`);
}

/** A text table: header row, then rows; numeric columns right-aligned. */
function table(header: string[], rows: string[][], rightAligned: boolean[]): string[] {
  const widths = header.map((title, c) => Math.max(title.length, ...rows.map((row) => row[c].length)));
  const render = (row: string[]): string =>
    INDENT + row.map((cell, c) => (c === row.length - 1 && !rightAligned[c] ? cell : rightAligned[c] ? cell.padStart(widths[c]) : cell.padEnd(widths[c]))).join('  ');
  return [render(header), ...rows.map(render)].map((line) => line.trimEnd());
}

/** At most `max` indices of 0..n-1, log-spaced, first and last kept. */
function thin(n: number, max: number): number[] {
  if (n <= max) return Array.from({ length: n }, (_, k) => k);
  if (max <= 0) return [];
  if (max === 1) return [0];
  const picked = new Set<number>();
  for (let k = 0; k < max; k++) picked.add(Math.round(Math.exp((Math.log(n) * k) / (max - 1))) - 1);
  return [...picked].filter((k) => k >= 0 && k < n).sort((a, b) => a - b);
}

function shorten(text: string, length: number): string {
  const flat = text.replace(/\s+/g, ' ');
  return flat.length > length ? `${flat.slice(0, length - 1)}…` : flat;
}

/** A time on the data clock, s: up to 6 significant digits, trailing zeros dropped (0.01, 12.5, 30). */
function formatTime(seconds: number): string {
  const text = formatNumber(seconds, 6);
  return /e/.test(text) || !text.includes('.') ? text : text.replace(/\.?0+$/, '');
}

/**
 * A number to `significant` digits; e-notation outside [1e-3, 1e6); integers ≥ 10^significant
 * are written whole.
 */
function formatNumber(value: number, significant = 3): string {
  if (!Number.isFinite(value)) return Number.isNaN(value) ? 'n/a' : value > 0 ? '∞' : '−∞';
  if (value === 0) return '0';
  const magnitude = Math.abs(value);
  if (magnitude >= 1e6 || magnitude < 1e-3) return value.toExponential(significant - 1);
  if (magnitude >= 10 ** significant) return Math.round(value).toString();
  return value.toPrecision(significant);
}

/**
 * `value [low, high] unit (95 % CI)`, rounded per GUM §7.2.6: the half-width to two significant
 * digits, value and bounds to the same decimal place.
 */
function withInterval(estimate: Estimate | null | undefined, unit: string, missing = 'not available', note = true): string {
  if (estimate === null || estimate === undefined) return missing;
  const [low, high] = estimate.ci95;
  const suffix = unit ? ` ${unit}` : '';
  const halfWidth = (high - low) / 2;
  if (!(halfWidth > 0) || !Number.isFinite(halfWidth)) {
    const bounds = Number.isFinite(low) || Number.isFinite(high) ? ` [${formatNumber(low)}, ${formatNumber(high)}]` : '';
    return `${formatNumber(estimate.value)}${bounds}${suffix}${bounds && note ? ' (95 % CI)' : ''}`;
  }
  const lastDigit = Math.floor(Math.log10(halfWidth)) - 1; // power of ten of the last digit kept
  const magnitude = Math.max(Math.abs(estimate.value), Math.abs(low), Math.abs(high));
  let render: (x: number) => string;
  if (magnitude >= 1e6 || lastDigit < -6) {
    const exponent = Math.floor(Math.log10(magnitude));
    const digits = Math.max(0, Math.min(20, exponent - lastDigit));
    render = (x) => x.toExponential(digits);
  } else {
    const decimals = Math.max(0, -lastDigit);
    render = (x) => x.toFixed(decimals);
  }
  return `${render(estimate.value)} [${render(low)}, ${render(high)}]${suffix}${note ? ' (95 % CI)' : ''}`;
}

/** `value ± se`, the standard error to two significant digits and the value to match (GUM §7.2.6). */
function withStandardError(value: number, se: number): string {
  if (!(se > 0) || !Number.isFinite(se)) return formatNumber(value);
  const lastDigit = Math.floor(Math.log10(se)) - 1;
  if (lastDigit < -6 || Math.abs(value) >= 1e6) return `${value.toExponential(2)} ± ${se.toExponential(1)} (SE)`;
  const decimals = Math.max(0, -lastDigit);
  return `${value.toFixed(decimals)} ± ${se.toFixed(decimals)} (SE)`;
}
