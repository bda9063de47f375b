import type { Report } from '../../src/report.js';
import type { Columns } from './boundColumns.js';
import { msdModel, type MsdModelInput } from './msdModel.js';

/** Column order of {@link msdColumns}. */
export const MSD_SERIES = ['lag', 'msd', 'msdLow', 'msdHigh', 'fit', 'expected', 'expectedLow', 'expectedHigh'] as const;

const positive = (v: number): number | null => (Number.isFinite(v) && v > 0 ? v : null);

/**
 * The model inputs of a report (null until a diffusion estimate exists). Δt from the options'
 * `frameInterval`, else the shortest MSD lag; d from `input.dims` (default 2); σ² from
 * `diffusion.localizationVariance`, else the square of `localizationError`.
 *
 * @example
 * msdModelOf(report)?.diffusion // → 0.438 (µm²/s)
 */
export function msdModelOf(report: Report): MsdModelInput | null {
  const D = report.diffusion.coefficient?.value;
  if (D === undefined || !Number.isFinite(D)) return null;
  const options = report.provenance?.options ?? {};
  const dt = typeof options.frameInterval === 'number' ? options.frameInterval : report.msd[0]?.lag;
  if (dt === undefined || !(dt > 0)) return null;
  const lv = report.diffusion.localizationVariance as { value?: number } | undefined;
  const sigma = report.diffusion.localizationError?.value;
  const variance = typeof lv?.value === 'number' ? lv.value : sigma !== undefined ? sigma * sigma : 0;
  const blur = typeof report.diffusion.blur === 'number' ? report.diffusion.blur : 0;
  const dims = typeof report.input.dims === 'number' ? report.input.dims : 2;
  return { diffusion: D, localizationVariance: variance, blur, frameInterval: dt, dims };
}

/**
 * Columnar data of the MSD chart (log–log, so values ≤ 0 become null gaps): per lag τ (s) the
 * ensemble MSD with its ± 1 SE band, the estimator's fitted model line ({@link msdModel}), and
 * the Stokes-Einstein expectation 2d·D_SE·τ with a ± 1.96·sd band (µm² throughout).
 *
 * Complexity O(lags).
 *
 * @example
 * const [lag, msd, low, high, fit, se, seLow, seHigh] = msdColumns(report);
 */
export function msdColumns(report: Report): Columns {
  const points = report.msd.filter((p) => Number.isFinite(p.lag) && p.lag > 0).sort((a, b) => a.lag - b.lag);
  const model = msdModelOf(report);
  const expected = (report.temperature as { expectedDiffusion?: { value: number; sd: number } | null }).expectedDiffusion ?? null;
  const dims = model?.dims ?? (typeof report.input.dims === 'number' ? report.input.dims : 2);
  const cols: Columns = MSD_SERIES.map(() => []);
  for (const p of points) {
    cols[0].push(p.lag);
    cols[1].push(positive(p.value));
    cols[2].push(positive(p.value - p.se));
    cols[3].push(positive(p.value + p.se));
    cols[4].push(model ? positive(msdModel(model, p.lag)) : null);
    if (expected && Number.isFinite(expected.value)) {
      const sd = Number.isFinite(expected.sd) ? expected.sd : 0;
      cols[5].push(positive(2 * dims * expected.value * p.lag));
      cols[6].push(positive(2 * dims * (expected.value - 1.96 * sd) * p.lag));
      cols[7].push(positive(2 * dims * (expected.value + 1.96 * sd) * p.lag));
    } else {
      cols[5].push(null);
      cols[6].push(null);
      cols[7].push(null);
    }
  }
  return cols;
}
