/**
 * Layout of the one-pass sufficient statistics that jostle keeps per track, per group of tracks
 * and per time block. They are plain sums, so any set of them adds up (Σ over tracks = the
 * ensemble; Σ over blocks = a time range), and the drift correction can be chosen at report time.
 *
 * Per axis a (8 values from `cveOffset(a)`): the covariance-estimator sums of one-slot steps Δ
 *   0 steps N, 1 ΣΔ, 2 ΣΔ², 3 adjacent pairs, 4 ΣΔ_kΔ_{k+1}, 5 Σ(Δ_k + Δ_{k+1}),
 *   6 ΣΔ'², 7 ΣΔ'_kΔ'_{k+1}  (Δ' = Δ − m(t), the per-frame common-mode step removed).
 * Expanding the squares lets a constant drift velocity v be removed afterwards (u = vΔt):
 *   Σ(Δ−u)² = ΣΔ² − 2uΣΔ + Nu²,  Σ(Δ_k−u)(Δ_{k+1}−u) = ΣΔ_kΔ_{k+1} − uΣ(Δ_k+Δ_{k+1}) + pairs·u².
 * Per lag l (1 + 3·dims values from `lagOffset(l)`): count, then per axis ΣΔ, ΣΔ², ΣΔ'² of the
 * lag-n displacements (time-averaged, overlapping).
 */
export interface StatsLayout {
  dims: number;
  lagCount: number;
  /** Width of one statistics record (Float64 values). */
  width: number;
  /** Offset of the per-track "previous step" scratch values (not summable; ignored in sums). */
  previousOffset: number;
  lagBase: number;
}

/** Values per axis in the covariance-estimator block. */
export const CVE_WIDTH = 8;
export const CVE_STEPS = 0;
export const CVE_SUM = 1;
export const CVE_SUM_SQUARES = 2;
export const CVE_PAIRS = 3;
export const CVE_SUM_PRODUCTS = 4;
export const CVE_SUM_PAIR_TERMS = 5;
export const CVE_SUM_SQUARES_CORRECTED = 6;
export const CVE_SUM_PRODUCTS_CORRECTED = 7;

/** Builds the layout for `dims` axes and `lagCount` lags. */
export function statsLayout(dims: number, lagCount: number): StatsLayout {
  const previousOffset = CVE_WIDTH * dims;
  // previous raw step per axis, previous corrected step per axis, slot of that step
  const lagBase = previousOffset + 2 * dims + 1;
  return { dims, lagCount, previousOffset, lagBase, width: lagBase + lagCount * (1 + 3 * dims) };
}

/** Offset of axis `axis`'s covariance-estimator block. */
export function cveOffset(axis: number): number {
  return axis * CVE_WIDTH;
}

/** Offset of lag index `lag`'s block (its count; axis a's ΣΔ, ΣΔ², ΣΔ'² follow at +1+3a). */
export function lagOffset(layout: StatsLayout, lag: number): number {
  return layout.lagBase + lag * (1 + 3 * layout.dims);
}

/** Adds the summable parts of `source` (at `sourceOffset`) into `target` (at `targetOffset`). */
export function addStats(
  layout: StatsLayout,
  target: Float64Array,
  targetOffset: number,
  source: Float64Array,
  sourceOffset: number,
  sign = 1,
): void {
  for (let i = 0; i < layout.previousOffset; i++) target[targetOffset + i] += sign * source[sourceOffset + i];
  for (let i = layout.lagBase; i < layout.width; i++) target[targetOffset + i] += sign * source[sourceOffset + i];
}
