import type { Alert, Estimate, Report } from '../report.js';
import type { Detector } from '../detectors/detector.js';
import type { Tag } from '../tag.js';
import { AnomalousExponentCache, anomalousExponent } from '../estimators/anomalousExponent.js';
import { chooseEstimator } from '../estimators/chooseEstimator.js';
import { cveFromSums } from '../estimators/cveFromSums.js';
import { cveVariance } from '../estimators/cveVariance.js';
import { msdFit } from '../estimators/msdFit.js';
import { msdFitRelativeSe } from '../estimators/msdFitRelativeSe.js';
import { nonGaussianParameter } from '../estimators/nonGaussianParameter.js';
import { qianRelativeVariance } from '../estimators/qianRelativeVariance.js';
import { expectedDiffusion } from '../physics/expectedDiffusion.js';
import { impliedRadius } from '../physics/impliedRadius.js';
import { impliedTemperature } from '../physics/impliedTemperature.js';
import { isTemperatureDependent } from '../physics/isTemperatureDependent.js';
import { parseMedium } from '../physics/parseMedium.js';
import { defaultRadiusSd } from '../physics/defaultRadiusSd.js';
import { chiSquareUpperTail, normalQuantile, studentTQuantile } from '../stats/quantiles.js';
import type { PipelineCounters } from './pipeline.js';
import type { DriftCorrection, ResolvedPipelineOptions } from './pipelineOptions.js';
import {
  CVE_PAIRS,
  CVE_STEPS,
  CVE_SUM,
  CVE_SUM_PAIR_TERMS,
  CVE_SUM_PRODUCTS,
  CVE_SUM_PRODUCTS_CORRECTED,
  CVE_SUM_SQUARES,
  CVE_SUM_SQUARES_CORRECTED,
  cveOffset,
  lagOffset,
  type StatsLayout,
} from './statsLayout.js';
import type { TimeBlocks } from './timeBlocks.js';
import type { TrackTable } from './trackTable.js';

/** Package version written into every report's provenance. */
export const JOSTLE_VERSION = '0.1.0';

const Z95 = normalQuantile(0.975);

/** Everything `buildReport` reads from a pipeline. */
export interface ReportInput {
  options: ResolvedPipelineOptions;
  layout: StatsLayout | undefined;
  lags: Int32Array;
  blur: number;
  tracks: TrackTable | undefined;
  blocks: TimeBlocks | undefined;
  counters: PipelineCounters;
  commonMode: Float64Array;
  commonModeFrames: number;
  commonModeSlots: number;
  /** ⟨1/N⟩ over steps: the per-frame correction shrinks squared steps by 1 − ⟨1/N⟩. */
  inverseCount: number;
  nonGaussianSums: Float64Array;
  detectors: readonly Detector[];
  alerts: readonly Alert[];
  tags: readonly Tag[];
  temperatureMean: number | undefined;
  temperatureLog: readonly { t: number; celsius: number }[];
  dims: number;
  firstTime: number | undefined;
  lastTime: number | undefined;
  /** Input-side figures from a reader (rows, rejected rows, quotes). */
  input?: Partial<Report['input']>;
  /** The options to print in provenance (CLI settings included). */
  provenanceOptions?: Record<string, unknown>;
  /** Time the report was generated (ISO string; passed in, src/ has no clock). */
  generated?: string;
  /**
   * Leave the per-track table out (`tracks` is then empty): for a live dashboard's frequent
   * updates, which do not draw it (it is most of a report's size: about 130 bytes of JSON per track).
   */
  omitTrackTable?: boolean;
}

/** How estimates are corrected for common-mode motion in one report. */
export interface CorrectionContext {
  method: 'fitted' | 'per-frame' | 'none';
  /** Drift per frame interval per axis, µm (u = vΔt), for the fitted correction. */
  drift: [number, number, number];
  /** 1/(1 − ⟨1/N⟩), the N/(N−1) factor of the per-frame correction. */
  factor: number;
  frameInterval: number;
  blur: number;
  dims: number;
}

/** Corrected covariance-estimator sums of one axis of a statistics record. */
export function correctedCveSums(stats: Float64Array, offset: number, axis: number, correction: CorrectionContext) {
  const c = offset + cveOffset(axis);
  const steps = stats[c + CVE_STEPS];
  const pairs = stats[c + CVE_PAIRS];
  if (correction.method === 'per-frame') {
    return {
      steps,
      pairs,
      sumSquares: stats[c + CVE_SUM_SQUARES_CORRECTED] * correction.factor,
      sumProducts: stats[c + CVE_SUM_PRODUCTS_CORRECTED] * correction.factor,
    };
  }
  const u = correction.method === 'fitted' ? correction.drift[axis] : 0;
  return {
    steps,
    pairs,
    // Σ(Δ−u)² = ΣΔ² − 2uΣΔ + Nu²;  Σ(Δ_k−u)(Δ_{k+1}−u) = ΣΔ_kΔ_{k+1} − uΣ(Δ_k+Δ_{k+1}) + pairs·u²
    sumSquares: stats[c + CVE_SUM_SQUARES] - 2 * u * stats[c + CVE_SUM] + steps * u * u,
    sumProducts: stats[c + CVE_SUM_PRODUCTS] - u * stats[c + CVE_SUM_PAIR_TERMS] + pairs * u * u,
  };
}

/** Corrected time-averaged MSD of one axis at lag index `lag` (frames `n`), µm², or NaN. */
export function correctedLagMsd(
  layout: StatsLayout,
  stats: Float64Array,
  offset: number,
  lag: number,
  n: number,
  axis: number,
  correction: CorrectionContext,
): number {
  const base = offset + lagOffset(layout, lag);
  const count = stats[base];
  if (!(count > 0)) return NaN;
  const at = base + 1 + 3 * axis;
  if (correction.method === 'per-frame') return (stats[at + 2] / count) * correction.factor;
  const u = correction.method === 'fitted' ? correction.drift[axis] * n : 0;
  return (stats[at + 1] - 2 * u * stats[at] + count * u * u) / count;
}

/** One estimate of D (and σ², per axis) from a statistics record. */
export interface PointEstimate {
  diffusion: number;
  perAxis: number[];
  localizationVariance: number;
  perAxisVariance: number[];
  steps: number;
  stepsPerAxis: number[];
}

/** Which estimator, and over how many MSD points. */
export interface EstimatorPlan {
  name: 'cve' | 'msd-fit';
  points: number;
  reason: string;
  epsilon: number;
  framesPerTrack: number;
}

/** D and σ² from a statistics record with the given plan. Undefined with too few steps. */
export function pointEstimate(
  layout: StatsLayout,
  stats: Float64Array,
  offset: number,
  plan: Pick<EstimatorPlan, 'name' | 'points'>,
  correction: CorrectionContext,
  lags: Int32Array,
): PointEstimate | undefined {
  const dims = correction.dims;
  const perAxis: number[] = [];
  const perAxisVariance: number[] = [];
  const stepsPerAxis: number[] = [];
  for (let a = 0; a < dims; a++) {
    const sums = correctedCveSums(stats, offset, a, correction);
    stepsPerAxis.push(sums.steps);
    if (plan.name === 'msd-fit') {
      const points = plan.points;
      const msd = new Float64Array(points);
      for (let l = 0; l < points; l++) msd[l] = correctedLagMsd(layout, stats, offset, l, lags[l], a, correction);
      if (msd.some((value) => !Number.isFinite(value))) return undefined;
      const fit = msdFit(msd, points, correction.frameInterval, correction.blur);
      if (!fit) return undefined;
      perAxis.push(fit.diffusion);
      perAxisVariance.push(fit.localizationVariance);
    } else {
      const estimate = cveFromSums(sums, correction.frameInterval, correction.blur);
      if (!estimate) return undefined;
      perAxis.push(estimate.diffusion);
      perAxisVariance.push(estimate.localizationVariance);
    }
  }
  const diffusion = perAxis.reduce((s, v) => s + v, 0) / dims;
  const localizationVariance = perAxisVariance.reduce((s, v) => s + v, 0) / dims;
  return {
    diffusion,
    perAxis,
    localizationVariance,
    perAxisVariance,
    steps: stepsPerAxis.reduce((s, v) => s + v, 0) / dims,
    stepsPerAxis,
  };
}

/**
 * Delete-a-group jackknife (Quenouille 1956; Tukey 1958; Efron & Stein 1981): SE of a statistic
 * from its leave-one-group-out values θ_(g): SE² = (G−1)/G · Σ(θ_(g) − θ̄)².
 */
export function jackknifeSe(leaveOneOut: readonly number[]): number {
  const g = leaveOneOut.length;
  if (g < 2) return NaN;
  const mean = leaveOneOut.reduce((s, v) => s + v, 0) / g;
  let ss = 0;
  for (const value of leaveOneOut) ss += (value - mean) ** 2;
  return Math.sqrt(((g - 1) / g) * ss);
}

function interval(value: number, se: number, df?: number): [number, number] {
  const q = df !== undefined && df < 200 ? studentTQuantile(0.975, df) : Z95;
  return [value - q * se, value + q * se];
}

function estimate(value: number, se: number, df?: number): Estimate | null {
  if (!Number.isFinite(value) || !Number.isFinite(se)) return null;
  return { value, ci95: interval(value, se, df) };
}

/** Decides the drift correction (see src/pipeline/README.md, "Drift correction"). */
export function chooseCorrection(input: ReportInput, global: Float64Array | undefined): {
  method: 'fitted' | 'per-frame' | 'none';
  reason: string;
  excessZ: number | null;
} {
  const requested: DriftCorrection = input.options.driftCorrection;
  if (requested === 'none') return { method: 'none', reason: 'drift correction turned off by option', excessZ: null };
  if (requested === 'per-frame') return { method: 'per-frame', reason: 'per-frame mean subtraction requested by option', excessZ: null };
  const excessZ = commonModeExcess(input, global);
  if (requested === 'fitted') return { method: 'fitted', reason: 'constant-velocity drift fit requested by option', excessZ };
  const flagged = input.alerts.some(
    (alert) => alert.kind === 'vibration' || String(alert.detail?.key ?? '').includes('jump'),
  );
  if (flagged) {
    return { method: 'per-frame', reason: 'vibration or a stage jump was detected: per-frame mean subtraction with the N/(N−1) factor', excessZ };
  }
  if (excessZ !== null && excessZ > input.options.commonModeExcessZ) {
    return {
      method: 'per-frame',
      reason: `common-mode motion exceeds a constant drift (standardised excess ${excessZ.toFixed(1)} > ${input.options.commonModeExcessZ}): per-frame mean subtraction with the N/(N−1) factor`,
      excessZ,
    };
  }
  return {
    method: 'fitted',
    reason:
      excessZ === null
        ? 'constant-velocity drift fitted from the common-mode steps (too few frames to test for more)'
        : `constant-velocity drift fitted from the common-mode steps (no excess common-mode motion, standardised excess ${excessZ.toFixed(1)})`,
    excessZ,
  };
}

/**
 * Standardised excess of the common-mode steps over what diffusion plus a constant drift gives:
 * χ² = Σ_t N_t(m_t − u)²/s̄² summed over x and y, with s̄² the pooled within-frame variance; under
 * the null χ² ≈ χ²(2(T−1)), its variance inflated by (1 + 2ρ₁²) for the lag-1 step correlation ρ₁
 * of localization error. Returns (χ² − df)/√(2·df·(1 + 2ρ₁²)), or null with < 20 frames.
 */
function commonModeExcess(input: ReportInput, global: Float64Array | undefined): number | null {
  if (input.commonModeFrames < 20) return null;
  const cm = input.commonMode;
  const duration = input.commonModeSlots;
  let chi = 0;
  let df = 0;
  // every tracked axis (z too in 3-D): the common-mode sums are kept at offset 7·axis
  for (let axis = 0; axis < input.dims; axis++) {
    const offset = 7 * axis;
    const withinVariance = cm[offset + 5] / cm[offset + 6];
    if (!(withinVariance > 0)) return null;
    const u = cm[offset] / duration;
    // Σ N(m − u)² = ΣNm² − 2uΣNm + u²ΣN
    chi += (cm[offset + 2] - 2 * u * cm[offset + 3] + u * u * cm[offset + 4]) / withinVariance;
    df += input.commonModeFrames - 1;
  }
  let rho = 0;
  if (global && input.layout) {
    const c = cveOffset(0);
    const steps = global[c + CVE_STEPS];
    const pairs = global[c + CVE_PAIRS];
    if (steps > 0 && pairs > 0) rho = global[c + CVE_SUM_PRODUCTS] / pairs / (global[c + CVE_SUM_SQUARES] / steps);
  }
  return (chi - df) / Math.sqrt(2 * df * (1 + 2 * rho * rho));
}

/** Build the CONTRACTS §3 report from the pipeline's accumulators. */
export function buildReport(input: ReportInput): Report {
  const o = input.options;
  const layout = input.layout;
  const dims = input.dims;
  const medium = parseMedium(o.medium);
  const provenance = {
    version: JOSTLE_VERSION,
    options: input.provenanceOptions ?? { ...o },
    generated: input.generated ?? new Date(0).toISOString(),
  };
  const tracks = input.tracks;
  const groupTotals = tracks ? tracks.groupTotals() : undefined;
  const global = layout && groupTotals ? sumGroups(layout, groupTotals, tracks!.groups) : undefined;
  const choice = chooseCorrection(input, global);
  const driftVelocity = velocityWithCi(input);
  const correction: CorrectionContext = {
    method: choice.method,
    drift: [
      (driftVelocity?.value[0] ?? 0) * o.frameInterval,
      (driftVelocity?.value[1] ?? 0) * o.frameInterval,
      // z (3-D): the same increment estimate, Σm_z/duration; the report's velocity stays in-plane
      driftVelocity && dims === 3 ? (input.commonMode[14] / (input.commonModeSlots * o.frameInterval)) * o.frameInterval : 0,
    ],
    factor: input.inverseCount < 1 ? 1 / (1 - input.inverseCount) : 1,
    frameInterval: o.frameInterval,
    blur: input.blur,
    dims,
  };
  const report: Report = emptyReport(provenance, input, choice);
  if (!layout || !global || !tracks || !groupTotals) return report;

  // Tracks with steps, and the typical track length (frames) for the estimator choice.
  const tracksWithSteps = countTracksWithSteps(tracks);
  const totalSteps = global[cveOffset(0) + CVE_STEPS];
  const framesPerTrack = tracksWithSteps > 0 ? Math.max(3, Math.round(totalSteps / tracksWithSteps + 1)) : 3;
  report.input.tracks = tracks.started;

  // 1. Plug-in x from the CVE, then the estimator choice (Michalet & Berglund 2012).
  const cvePlan = { name: 'cve' as const, points: 2 };
  const first = pointEstimate(layout, global, 0, cvePlan, correction, input.lags);
  const plan = first ? planEstimator(first, correction, framesPerTrack, input.lags, o.consecutiveLags) : undefined;
  const best = first && plan ? pointEstimate(layout, global, 0, plan, correction, input.lags) ?? first : first;

  // 2. Jackknife units: groups of tracks (enough tracks) or nothing.
  const groupCount = tracks.groups;
  const nonEmpty: number[] = [];
  for (let g = 0; g < groupCount; g++) if (groupTotals[g * layout.width + cveOffset(0) + CVE_STEPS] > 0) nonEmpty.push(g);
  const useJackknife = tracksWithSteps >= o.jackknifeMinTracks && nonEmpty.length >= 5;
  const leaveOneOut = useJackknife
    ? nonEmpty.map((g) => {
        const stats = Float64Array.from(global);
        for (let i = 0; i < layout.width; i++) stats[i] -= groupTotals[g * layout.width + i];
        return stats;
      })
    : [];
  const jackknifeDf = useJackknife ? nonEmpty.length - 1 : undefined;

  if (best && plan) {
    const x = best.localizationVariance / (best.diffusion * o.frameInterval);
    report.diffusion.reducedError = Number.isFinite(x) ? x : null;
    const leave = leaveOneOut.map((stats) => pointEstimate(layout, stats, 0, plan, correction, input.lags));
    const modelSe = modelDiffusionSe(best.diffusion, plan, best.steps, tracksWithSteps, dims, framesPerTrack);
    let diffusionSe = modelSe;
    let ciMethod = 'model variance (homogeneous free diffusion)';
    if (useJackknife && leave.every((e) => e !== undefined)) {
      diffusionSe = jackknifeSe(leave.map((e) => e!.diffusion));
      ciMethod = `delete-a-group jackknife over ${nonEmpty.length} groups of tracks (Student t, ${jackknifeDf} df)`;
    }
    report.diffusion.coefficient = estimate(best.diffusion, diffusionSe, useJackknife ? jackknifeDf : undefined);
    report.diffusion.estimator = {
      name: plan.name,
      reason: plan.reason,
      ...(plan.name === 'msd-fit' ? { msdPoints: plan.points } : {}),
      ci: ciMethod,
      modelSe,
      framesPerTrack,
      tracksUsed: tracksWithSteps,
    };
    const axisNames = ['x', 'y', 'z'] as const;
    for (let a = 0; a < dims; a++) {
      let se = modelDiffusionSe(best.perAxis[a], plan, best.stepsPerAxis[a], tracksWithSteps, 1, framesPerTrack);
      if (useJackknife && leave.every((e) => e !== undefined)) se = jackknifeSe(leave.map((e) => e!.perAxis[a]));
      (report.diffusion.perAxis as Record<string, Estimate | null>)[axisNames[a]] = estimate(
        best.perAxis[a],
        se,
        useJackknife ? jackknifeDf : undefined,
      );
    }
    // σ per axis (µm): CI of σ² by the jackknife, mapped through √ (clamped at 0).
    const sigma2 = best.localizationVariance;
    let sigma2Se = NaN;
    if (useJackknife && leave.every((e) => e !== undefined)) sigma2Se = jackknifeSe(leave.map((e) => e!.localizationVariance));
    else sigma2Se = blockJackknifeSigma2(input, plan, correction);
    if (Number.isFinite(sigma2)) {
      const [low, high] = Number.isFinite(sigma2Se) ? interval(sigma2, sigma2Se, jackknifeDf) : [NaN, NaN];
      report.diffusion.localizationError = {
        value: Math.sqrt(Math.max(0, sigma2)),
        ci95: [Math.sqrt(Math.max(0, low)), Math.sqrt(Math.max(0, high))],
      };
      report.diffusion.localizationVariance = { value: sigma2, se: sigma2Se };
    }
  }

  // 3. Ensemble MSD curve with SEs.
  const curve = ensembleMsd(input, layout, global, leaveOneOut, correction, framesPerTrack, tracksWithSteps);
  report.msd = curve;

  // 4. α from the MSD with noise and blur modelled (estimators.md §4).
  report.diffusion.exponent = exponentEstimate(input, layout, global, leaveOneOut, correction, curve, framesPerTrack, jackknifeDf);

  // 5. Per-track table.
  report.tracks = input.omitTrackTable ? [] : trackRows(input, tracks, correction);

  // 6. Heterogeneity: α2 at the first lag.
  const ng = input.nonGaussianSums;
  if (ng[2] >= 10) {
    const alpha2 = nonGaussianParameter(ng[0], ng[1], ng[2], dims);
    report.heterogeneity.alpha2 = alpha2 ? { value: alpha2.value, se: alpha2.se } : null;
  }

  // 7. Drift velocity, physics, segments, rolling window.
  report.drift.velocity = driftVelocity;
  physics(report, input, medium);
  report.segments = segments(input, correction, plan);
  report.rolling = rolling(input, correction, plan);
  report.series = { diffusion: diffusionSeries(input, correction, plan) };
  mergeDetectorSummaries(report, input.detectors);
  return report;
}

function planEstimator(
  first: PointEstimate,
  correction: CorrectionContext,
  framesPerTrack: number,
  lags: Int32Array,
  consecutiveLags: number,
): EstimatorPlan {
  const x = first.localizationVariance / (first.diffusion * correction.frameInterval);
  const epsilon = x - 2 * correction.blur;
  if (!Number.isFinite(epsilon) || first.diffusion <= 0) {
    return { name: 'cve', points: 2, reason: 'covariance estimator (x could not be estimated yet)', epsilon: NaN, framesPerTrack };
  }
  const choice = chooseEstimator(epsilon, Math.max(3, framesPerTrack));
  const available = Math.min(consecutiveLags, countLeadingConsecutive(lags));
  if (choice.name === 'msd-fit') {
    const points = Math.max(2, Math.min(choice.points, available));
    const capped = points < choice.points ? ` (capped at ${points} consecutive lags kept)` : '';
    return { name: 'msd-fit', points, reason: `${choice.reason}${capped}`, epsilon, framesPerTrack };
  }
  return { name: 'cve', points: 2, reason: choice.reason, epsilon, framesPerTrack };
}

function countLeadingConsecutive(lags: Int32Array): number {
  let n = 0;
  while (n < lags.length && lags[n] === n + 1) n++;
  return n;
}

/** Model SE of D: CVE variance (Vestergaard et al. 2014) or MSD-fit variance (exact covariance). */
function modelDiffusionSe(
  diffusion: number,
  plan: EstimatorPlan,
  steps: number,
  tracks: number,
  dims: number,
  framesPerTrack: number,
): number {
  if (!(steps > 0) || !Number.isFinite(diffusion)) return NaN;
  const epsilon = Number.isFinite(plan.epsilon) ? plan.epsilon : 0;
  const d = Math.abs(diffusion);
  if (plan.name === 'cve') return Math.sqrt(cveVariance(d, epsilon, steps, Math.max(1, tracks)) / dims);
  const equivalentTracks = Math.max(1, steps / Math.max(1, framesPerTrack - 1));
  return (d * msdFitRelativeSe(epsilon, Math.max(3, framesPerTrack), plan.points)) / Math.sqrt(equivalentTracks * dims);
}

/** SE of σ² by a delete-one-block jackknife over time blocks (few tracks), or NaN. */
function blockJackknifeSigma2(input: ReportInput, plan: EstimatorPlan, correction: CorrectionContext): number {
  const blocks = input.blocks;
  const layout = input.layout;
  if (!blocks || !layout || blocks.count < 10) return NaN;
  // Merge blocks into 10 contiguous groups so each holds enough steps.
  const groups = 10;
  const per = Math.ceil(blocks.count / groups);
  const sums: Float64Array[] = [];
  const total = new Float64Array(layout.width);
  for (let g = 0; g < groups; g++) {
    const stats = new Float64Array(layout.width);
    for (let b = g * per; b < Math.min(blocks.count, (g + 1) * per); b++) {
      for (let i = 0; i < layout.width; i++) stats[i] += blocks.stats[b * layout.width + i];
    }
    sums.push(stats);
    for (let i = 0; i < layout.width; i++) total[i] += stats[i];
  }
  const values: number[] = [];
  for (const stats of sums) {
    const leave = Float64Array.from(total);
    for (let i = 0; i < layout.width; i++) leave[i] -= stats[i];
    const e = pointEstimate(layout, leave, 0, plan, correction, input.lags);
    if (!e) return NaN;
    values.push(e.localizationVariance);
  }
  return jackknifeSe(values);
}

function ensembleMsd(
  input: ReportInput,
  layout: StatsLayout,
  global: Float64Array,
  leaveOneOut: Float64Array[],
  correction: CorrectionContext,
  framesPerTrack: number,
  tracksWithSteps: number,
): Report['msd'] {
  const points: Report['msd'] = [];
  const dims = correction.dims;
  for (let l = 0; l < input.lags.length; l++) {
    const n = input.lags[l];
    const count = global[lagOffset(layout, l)];
    if (!(count > 0)) continue;
    let value = 0;
    for (let a = 0; a < dims; a++) value += correctedLagMsd(layout, global, 0, l, n, a, correction);
    let se = NaN;
    if (leaveOneOut.length >= 5) {
      const values: number[] = [];
      for (const stats of leaveOneOut) {
        let v = 0;
        for (let a = 0; a < dims; a++) v += correctedLagMsd(layout, stats, 0, l, n, a, correction);
        values.push(v);
      }
      se = jackknifeSe(values);
    }
    if (!Number.isFinite(se)) {
      // Qian, Sheetz & Elson 1991 relative variance of a time-averaged MSD point, pooled over tracks.
      const frames = Math.max(n + 1, framesPerTrack);
      se = Math.abs(value) * Math.sqrt(qianRelativeVariance(n, frames, dims) / Math.max(1, tracksWithSteps));
    }
    points.push({ lag: n * input.options.frameInterval, value, se, count });
  }
  return points;
}

function exponentEstimate(
  input: ReportInput,
  layout: StatsLayout,
  global: Float64Array,
  leaveOneOut: Float64Array[],
  correction: CorrectionContext,
  curve: Report['msd'],
  framesPerTrack: number,
  jackknifeDf: number | undefined,
): Estimate | null {
  // Lags up to a quarter of the typical track (Kepten et al. 2015: long lags are noisy), at most
  // the consecutive lags (one decade by default: at longer lags the field of view's edge biases
  // the MSD low, since only displacements with both ends in view are seen), and with at least
  // 10 % of the first lag's count; at least 3 points.
  const firstCount = curve.length > 0 ? curve[0].count : 0;
  const maxLagS = Math.min(input.options.consecutiveLags, Math.max(4, framesPerTrack / 4)) * input.options.frameInterval;
  const use = curve.filter((p) => p.lag <= maxLagS + 1e-12 && p.count >= 0.1 * firstCount && p.se > 0);
  if (use.length < 3) return null;
  // one cache for the full fit and the leave-one-group-out fits (the same lags and exposure)
  const cache = new AnomalousExponentCache(input.options.exposure);
  const fit = (values: number[]) =>
    anomalousExponent({
      lagsS: use.map((p) => p.lag),
      msd: values,
      se: use.map((p) => p.se),
      dims: correction.dims,
      exposureS: input.options.exposure,
    }, cache);
  const full = fit(use.map((p) => p.value));
  if (!full) return null;
  if (leaveOneOut.length >= 5) {
    const lagIndex = use.map((p) => Array.from(input.lags).findIndex((n) => Math.abs(n * input.options.frameInterval - p.lag) < 1e-12));
    const alphas: number[] = [];
    for (const stats of leaveOneOut) {
      const values = lagIndex.map((l) => {
        let v = 0;
        for (let a = 0; a < correction.dims; a++) v += correctedLagMsd(layout, stats, 0, l, input.lags[l], a, correction);
        return v;
      });
      const e = fit(values);
      if (e) alphas.push(e.alpha);
    }
    if (alphas.length >= 5) return estimate(full.alpha, jackknifeSe(alphas), jackknifeDf);
  }
  void global;
  return estimate(full.alpha, full.alphaSe);
}

function trackRows(input: ReportInput, tracks: TrackTable, correction: CorrectionContext): Report['tracks'] {
  const rows: Report['tracks'] = [];
  const live = Array.from(tracks.liveRows()).map((index) => tracks.liveRow(index));
  for (const row of [...tracks.table, ...live]) {
    if (rows.length >= input.options.maxTrackTable) break;
    let d: Estimate | null = null;
    if (row.length - 1 >= input.options.minTrackSteps) {
      const e = trackDiffusion(row.cve, correction);
      if (e) d = e;
    }
    rows.push({ id: row.id, frames: row.length, start: row.start, end: row.end, D: d });
  }
  return rows;
}

/** Per-track D with the CVE and its model CI (one track). */
function trackDiffusion(cve: Float64Array, correction: CorrectionContext): Estimate | null {
  let sum = 0;
  let steps = 0;
  let sigma2 = 0;
  for (let a = 0; a < correction.dims; a++) {
    const sums = correctedCveSums(cve, 0, a, correction);
    const e = cveFromSums(sums, correction.frameInterval, correction.blur);
    if (!e) return null;
    sum += e.diffusion;
    sigma2 += e.localizationVariance;
    steps += sums.steps;
  }
  const d = sum / correction.dims;
  const epsilon = sigma2 / correction.dims / (Math.abs(d) * correction.frameInterval) - 2 * correction.blur;
  const variance = cveVariance(Math.abs(d), Number.isFinite(epsilon) ? epsilon : 0, steps / correction.dims, 1) / correction.dims;
  return estimate(d, Math.sqrt(variance));
}

/** Drift velocity with a CI from the increments (detectors.md §1), µm/s. */
function velocityWithCi(input: ReportInput): Report['drift']['velocity'] {
  const duration = input.commonModeSlots * input.options.frameInterval;
  if (!(duration > 0) || input.commonModeFrames < 2) return null;
  const cm = input.commonMode;
  const vx = cm[0] / duration;
  const vy = cm[7] / duration;
  const sex = Math.sqrt(cm[1]) / duration;
  const sey = Math.sqrt(cm[8]) / duration;
  return {
    value: [vx, vy],
    ci95: [
      [vx - Z95 * sex, vx + Z95 * sex],
      [vy - Z95 * sey, vy + Z95 * sey],
    ],
  };
}

function physics(report: Report, input: ReportInput, medium: ReturnType<typeof parseMedium>): void {
  const o = input.options;
  const reported = input.temperatureMean;
  report.temperature.reported = reported ?? null;
  const d = report.diffusion.coefficient;
  const radiusSd = o.radius !== undefined ? (o.radiusSd ?? defaultRadiusSd(o.radius)) : undefined;
  if (o.radius !== undefined && reported !== undefined) {
    const expected = expectedDiffusion({ celsius: reported, radius: o.radius, radiusSd, medium, height: o.height });
    report.temperature.expectedDiffusion = { value: expected.value, sd: expected.sd };
    if (d) {
      const se = (d.ci95[1] - d.ci95[0]) / (2 * Z95);
      const z = (d.value - expected.value) / Math.sqrt(se * se + expected.sd * expected.sd);
      report.temperature.diffusionZ = z;
    }
  }
  if (d && o.radius !== undefined && isTemperatureDependent(medium)) {
    report.temperature.implied = impliedTemperature({ diffusion: d, radius: o.radius, radiusSd, medium, height: o.height });
  }
  if (d && reported !== undefined && d.value > 0) {
    report.size.impliedRadius = impliedRadius({ diffusion: d, celsius: reported, medium, height: o.height });
  }
}

function segmentDiffusion(
  input: ReportInput,
  from: number,
  to: number | null,
  correction: CorrectionContext,
  plan: EstimatorPlan | undefined,
): Estimate | null {
  const blocks = input.blocks;
  const layout = input.layout;
  if (!blocks || !layout) return null;
  const { stats, blocks: used } = blocks.sumOver(from, to);
  if (used === 0) return null;
  const usePlan = plan ?? { name: 'cve' as const, points: 2, reason: '', epsilon: 0, framesPerTrack: 3 };
  const e = pointEstimate(layout, stats, 0, usePlan, correction, input.lags);
  if (!e) return null;
  const tracks = Math.max(1, e.steps / Math.max(1, usePlan.framesPerTrack - 1));
  return estimate(e.diffusion, modelDiffusionSe(e.diffusion, usePlan, e.steps, tracks, correction.dims, usePlan.framesPerTrack));
}

function segments(input: ReportInput, correction: CorrectionContext, plan: EstimatorPlan | undefined): Report['segments'] {
  const out: Report['segments'] = [];
  for (const tag of input.tags) {
    if (tag.end === null || tag.end === undefined) continue;
    out.push({
      label: tag.label,
      start: tag.start,
      end: tag.end,
      note: tag.note,
      diffusion: segmentDiffusion(input, tag.start, tag.end, correction, plan),
    });
  }
  return out;
}

function rolling(input: ReportInput, correction: CorrectionContext, plan: EstimatorPlan | undefined) {
  if (input.lastTime === undefined) return null;
  const from = input.lastTime - input.options.rollingWindowSeconds;
  return {
    windowSeconds: input.options.rollingWindowSeconds,
    from,
    to: input.lastTime,
    diffusion: segmentDiffusion(input, from, null, correction, plan),
    msd: rollingMsd(input, from, correction),
  };
}

/** Ensemble MSD over the time blocks of the rolling window: [{ lag s, value µm², count }]. */
function rollingMsd(input: ReportInput, from: number, correction: CorrectionContext): { lag: number; value: number; count: number }[] {
  const blocks = input.blocks;
  const layout = input.layout;
  if (!blocks || !layout) return [];
  const { stats } = blocks.sumOver(from, null);
  const points: { lag: number; value: number; count: number }[] = [];
  for (let l = 0; l < input.lags.length; l++) {
    const count = stats[lagOffset(layout, l)];
    if (!(count > 0)) continue;
    let value = 0;
    for (let a = 0; a < correction.dims; a++) value += correctedLagMsd(layout, stats, 0, l, input.lags[l], a, correction);
    points.push({ lag: input.lags[l] * input.options.frameInterval, value, count });
  }
  return points;
}

/** D per time block (decimated to ≤ 600 points): t s, value, low, high µm²/s. */
function diffusionSeries(input: ReportInput, correction: CorrectionContext, plan: EstimatorPlan | undefined) {
  const blocks = input.blocks;
  const layout = input.layout;
  const series = { t: [] as number[], value: [] as (number | null)[], low: [] as (number | null)[], high: [] as (number | null)[] };
  if (!blocks || !layout) return series;
  const stride = Math.max(1, Math.ceil(blocks.count / 600));
  const usePlan = plan ?? { name: 'cve' as const, points: 2, reason: '', epsilon: 0, framesPerTrack: 3 };
  for (let b = 0; b < blocks.count; b += stride) {
    const stats = new Float64Array(layout.width);
    let tEnd = NaN;
    for (let k = b; k < Math.min(blocks.count, b + stride); k++) {
      if (Number.isNaN(blocks.start[k])) continue;
      for (let i = 0; i < layout.width; i++) stats[i] += blocks.stats[k * layout.width + i];
      tEnd = blocks.end[k];
    }
    if (Number.isNaN(tEnd)) continue;
    const e = pointEstimate(layout, stats, 0, { name: 'cve', points: 2 }, correction, input.lags);
    series.t.push(tEnd);
    if (!e) {
      series.value.push(null);
      series.low.push(null);
      series.high.push(null);
      continue;
    }
    const tracks = Math.max(1, e.steps / Math.max(1, usePlan.framesPerTrack - 1));
    const se = modelDiffusionSe(e.diffusion, { ...usePlan, name: 'cve', points: 2 }, e.steps, tracks, correction.dims, usePlan.framesPerTrack);
    series.value.push(e.diffusion);
    series.low.push(e.diffusion - Z95 * se);
    series.high.push(e.diffusion + Z95 * se);
  }
  return series;
}

function mergeDetectorSummaries(report: Report, detectors: readonly Detector[]): void {
  const summaries: Record<string, unknown> = {};
  for (const detector of detectors) summaries[detector.name] = detector.summary();
  report.detectors = summaries;
  const drift = summaries.drift as Record<string, unknown> | undefined;
  if (drift) {
    Object.assign(report.drift, { ...drift, velocity: report.drift.velocity ?? drift.velocity ?? null });
    // the path (up to thousands of points) is given once, in report.drift.path
    const { path: _path, ...rest } = drift;
    summaries.drift = rest;
  }
  const vibration = summaries.vibration as { peaks?: Report['vibration']['peaks'] } | undefined;
  if (vibration) Object.assign(report.vibration, vibration, { peaks: vibration.peaks ?? [] });
  const temperature = summaries.temperature as Record<string, unknown> | undefined;
  if (temperature) {
    const { implied: _implied, reported: _reported, ...rest } = temperature;
    Object.assign(report.temperature, rest);
  }
}

function sumGroups(layout: StatsLayout, totals: Float64Array, groups: number): Float64Array {
  const sum = new Float64Array(layout.width);
  for (let g = 0; g < groups; g++) for (let i = 0; i < layout.width; i++) sum[i] += totals[g * layout.width + i];
  return sum;
}

function countTracksWithSteps(tracks: TrackTable): number {
  return tracks.tracksWithSteps();
}

function emptyReport(
  provenance: Report['provenance'],
  input: ReportInput,
  choice: { method: 'fitted' | 'per-frame' | 'none'; reason: string; excessZ: number | null },
): Report {
  const counters = input.counters;
  const rejectedRows = input.input?.rejectedRows ?? 0;
  return {
    provenance,
    input: {
      rows: input.input?.rows ?? counters.centroids,
      rejectedRows,
      frames: counters.frames,
      tracks: input.tracks?.started ?? 0,
      rejected: input.input?.rejected ?? [],
      ...input.input,
      centroids: counters.centroids,
      rejectedFrames: counters.rejectedFrames,
      duplicateFrames: counters.duplicateFrames,
      duplicateIds: counters.duplicateIds,
      nonFiniteCentroids: counters.nonFinite,
      start: input.firstTime ?? null,
      end: input.lastTime ?? null,
      dims: input.dims,
    },
    diffusion: {
      coefficient: null,
      estimator: null,
      perAxis: input.dims === 3 ? { x: null, y: null, z: null } : { x: null, y: null },
      localizationError: null,
      exponent: null,
      reducedError: null,
      driftCorrection: { method: choice.method, reason: choice.reason, ...(choice.excessZ !== null ? { excessZ: choice.excessZ } : {}) },
      blur: input.blur,
    },
    msd: [],
    tracks: [],
    heterogeneity: { alpha2: null },
    drift: { velocity: null },
    vibration: { peaks: [] },
    temperature: { reported: input.temperatureMean ?? null, implied: null },
    size: { impliedRadius: null },
    alerts: input.alerts.map((alert) => ({ ...alert })),
    segments: [],
    tags: input.tags.map((tag) => ({ ...tag })),
  };
}

export { chiSquareUpperTail };
