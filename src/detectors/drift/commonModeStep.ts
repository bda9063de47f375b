import type { FrameSteps } from '../frameSteps.js';

/** The common-mode step of one frame: mean step and across-particle SD per axis. */
export interface CommonModeStep {
  /** Mean step m_x over the particles with a step, µm. */
  mx: number;
  /** Mean step m_y, µm. */
  my: number;
  /** Across-particle sample SD of the x steps, µm (NaN when n < 2). */
  sx: number;
  /** Across-particle sample SD of the y steps, µm (NaN when n < 2). */
  sy: number;
  /** Number of steps used. */
  n: number;
}

/**
 * Common-mode (ensemble-mean) step of one frame, m(t) = (1/N_t) Σ d_i(t), with the
 * across-particle SD s_t per axis, so that s_t/√N_t is the self-calibrating standard error of
 * m(t): it needs neither D nor σ and tolerates heterogeneous D (detectors.md §1). Non-finite
 * steps are skipped. Two passes over the steps (mean, then centred sum of squares) for
 * accuracy. O(N_t), no allocation beyond the result.
 *
 * @param steps one frame of steps from the pipeline (not mutated)
 * @returns mean steps (µm), SDs (µm) and the count; means are NaN when no step is usable
 * @example
 * // steps dx = [0.1, 0.3], dy = [0, 0.2]
 * commonModeStep(steps); // → { mx: 0.2, my: 0.1, sx: 0.1414, sy: 0.1414, n: 2 }
 */
export function commonModeStep(steps: Pick<FrameSteps, 'stepCount' | 'dx' | 'dy'>): CommonModeStep {
  const { stepCount, dx, dy } = steps;
  let n = 0;
  let sumX = 0;
  let sumY = 0;
  for (let i = 0; i < stepCount; i++) {
    const a = dx[i];
    const b = dy[i];
    if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
    n++;
    sumX += a;
    sumY += b;
  }
  if (n === 0) return { mx: Number.NaN, my: Number.NaN, sx: Number.NaN, sy: Number.NaN, n: 0 };
  const mx = sumX / n;
  const my = sumY / n;
  let ssX = 0;
  let ssY = 0;
  for (let i = 0; i < stepCount; i++) {
    const a = dx[i];
    const b = dy[i];
    if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
    ssX += (a - mx) * (a - mx);
    ssY += (b - my) * (b - my);
  }
  const sx = n > 1 ? Math.sqrt(ssX / (n - 1)) : Number.NaN;
  const sy = n > 1 ? Math.sqrt(ssY / (n - 1)) : Number.NaN;
  return { mx, my, sx, sy, n };
}
