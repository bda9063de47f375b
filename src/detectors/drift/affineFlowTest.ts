import { fUpperTail } from '../../stats/quantiles.js';

/** Result of the affine flow test over one window. */
export interface AffineFlowResult {
  /** Velocity-gradient matrix A (1/s): steps d_i = v + A(r_i − r̄)Δt, rows x and y. */
  gradient: [[number, number], [number, number]];
  /** Rigid rotation rate ω = (A_yx − A_xy)/2, rad/s (positive counter-clockwise). */
  rotation: number;
  /** Divergence A_xx + A_yy, 1/s (converging or diverging flow, e.g. convection). */
  divergence: number;
  /** Magnitude of the symmetric traceless part (pure shear/strain rate), 1/s. */
  shear: number;
  /** F statistic for A = 0 with (4, df2) degrees of freedom. */
  f: number;
  /** Residual degrees of freedom. */
  df2: number;
  /** p-value P(F > f). */
  pValue: number;
  /** Steps used. */
  steps: number;
  /** Which flow pattern dominates: 'rotation' | 'shear' | 'convection'. */
  pattern: 'rotation' | 'shear' | 'convection';
}

/**
 * Least-squares fit of the affine flow model d_i = v_t + A(r_i − r̄_t) to the one-frame steps of a
 * window, with a free common-mode v_t for every frame (so stage drift and vibration are absorbed),
 * and the F-test of A = 0 (the general linear hypothesis test; detectors.md §1 "diagnose flow
 * against stage drift"). r_i is the position at the start of the step, so that localization
 * noise in the step is independent of the regressor. Accumulates within-frame centred
 * cross-products, O(N_t) per frame and O(1) memory; `result()` solves two 2 × 2 systems.
 *
 * Rejection means the steps depend on position: rotation, shear or convection, not a rigid
 * stage translation. The test assumes equal step variance across particles; heterogeneous D
 * makes it mildly liberal, so use a small alpha.
 *
 * @example
 * const test = new AffineFlowTest();
 * test.addFrame(n, x0, y0, dx, dy);   // start positions (µm) and steps (µm) of one frame
 * test.result(0.033)?.pValue;          // → e.g. 0.42 for Brownian particles
 */
export class AffineFlowTest {
  private sxx = 0;
  private sxy = 0;
  private syy = 0;
  private sxu = 0;
  private syu = 0;
  private sxv = 0;
  private syv = 0;
  private suu = 0;
  private svv = 0;
  private steps = 0;
  private frames = 0;

  /** Forget everything (start a new window). */
  reset(): void {
    this.sxx = this.sxy = this.syy = 0;
    this.sxu = this.syu = this.sxv = this.syv = 0;
    this.suu = this.svv = 0;
    this.steps = 0;
    this.frames = 0;
  }

  /**
   * Add one frame: `n` steps with start positions (x0, y0) µm and steps (dx, dy) µm, all finite.
   * The frame needs at least 2 steps to contribute.
   */
  addFrame(n: number, x0: Float64Array, y0: Float64Array, dx: Float64Array, dy: Float64Array): void {
    if (n < 2) return;
    let mx = 0, my = 0, mu = 0, mv = 0;
    for (let i = 0; i < n; i++) {
      mx += x0[i];
      my += y0[i];
      mu += dx[i];
      mv += dy[i];
    }
    mx /= n; my /= n; mu /= n; mv /= n;
    // the frame's sums in locals, added to the window's once (no field store per step)
    let sxx = 0, sxy = 0, syy = 0, sxu = 0, syu = 0, sxv = 0, syv = 0, suu = 0, svv = 0;
    for (let i = 0; i < n; i++) {
      const a = x0[i] - mx;
      const b = y0[i] - my;
      const u = dx[i] - mu;
      const v = dy[i] - mv;
      sxx += a * a;
      sxy += a * b;
      syy += b * b;
      sxu += a * u;
      syu += b * u;
      sxv += a * v;
      syv += b * v;
      suu += u * u;
      svv += v * v;
    }
    this.sxx += sxx;
    this.sxy += sxy;
    this.syy += syy;
    this.sxu += sxu;
    this.syu += syu;
    this.sxv += sxv;
    this.syv += syv;
    this.suu += suu;
    this.svv += svv;
    this.steps += n;
    this.frames++;
  }

  /** Steps accumulated in the current window. */
  get stepCount(): number {
    return this.steps;
  }

  /**
   * Fit and test. `frameInterval` (s) converts the per-frame gradient to 1/s.
   * Returns undefined when the window is too small or the positions are degenerate.
   */
  result(frameInterval: number): AffineFlowResult | undefined {
    const df2 = 2 * (this.steps - this.frames) - 4;
    const det = this.sxx * this.syy - this.sxy * this.sxy;
    if (df2 < 1 || !(det > 0)) return undefined;
    // Normal equations per axis: [Sxx Sxy; Sxy Syy] (a, b) = (Sxu, Syu).
    const axx = (this.syy * this.sxu - this.sxy * this.syu) / det;
    const axy = (this.sxx * this.syu - this.sxy * this.sxu) / det;
    const ayx = (this.syy * this.sxv - this.sxy * this.syv) / det;
    const ayy = (this.sxx * this.syv - this.sxy * this.sxv) / det;
    const explained = axx * this.sxu + axy * this.syu + ayx * this.sxv + ayy * this.syv;
    const residual = this.suu + this.svv - explained;
    if (!(residual > 0)) return undefined;
    const f = explained / 4 / (residual / df2);
    const scale = 1 / frameInterval;
    const gxx = axx * scale, gxy = axy * scale, gyx = ayx * scale, gyy = ayy * scale;
    const rotation = 0.5 * (gyx - gxy);
    const divergence = gxx + gyy;
    const shear = Math.hypot(0.5 * (gxx - gyy), 0.5 * (gxy + gyx));
    let pattern: AffineFlowResult['pattern'] = 'rotation';
    if (shear >= Math.abs(rotation) && shear >= Math.abs(divergence) / 2) pattern = 'shear';
    else if (Math.abs(divergence) / 2 > Math.abs(rotation)) pattern = 'convection';
    return {
      gradient: [[gxx, gxy], [gyx, gyy]],
      rotation,
      divergence,
      shear,
      f,
      df2,
      pValue: fUpperTail(f, 4, df2),
      steps: this.steps,
      pattern,
    };
  }
}
