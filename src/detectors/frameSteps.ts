/**
 * What every detector sees of one frame, after linking and before drift correction: the
 * particles present, and the one-frame steps of those also present in the previous frame.
 *
 * All arrays are views owned by the pipeline and reused on the next frame: a detector that needs
 * a value later must copy it. Only the first `count` (positions) or `stepCount` (steps) entries
 * are meaningful. Units: µm and s.
 */
export interface FrameSteps {
  /** Frame time, s (data clock). */
  t: number;
  /** Frame index as given by the rig or file. */
  frameIndex: number;
  /**
   * Nominal time slot: round((t − t₀)/Δt). Lags and gaps are measured in slots, so that a
   * dropped frame shows as a slot gap even when the rig's index does not skip.
   */
  slot: number;
  /** Slots since the previous accepted frame (1 normally, > 1 after dropped frames, 0 for duplicated). */
  slotGap: number;
  /** Nominal frame interval Δt, s. */
  frameInterval: number;
  /** Exposure time t_E, s (≤ Δt). */
  exposure: number;
  /** Number of particles present in this frame. */
  count: number;
  /** Track id of each present particle. */
  trackId: Uint32Array;
  /**
   * A row per present particle for per-track caches (see TrackCache): the pipeline's table row,
   * small, stable while the track lives and reused after it ends. Only a hint: detectors check
   * the id, so any non-negative numbering is correct (hand-made frames may pass the index).
   */
  trackRow: Int32Array;
  /** Positions of present particles, µm. */
  x: Float64Array;
  y: Float64Array;
  /** Intensity of present particles, or undefined when the input has none. */
  intensity: Float64Array | undefined;
  /** Length of the track so far (positions, including this one) for each present particle. */
  trackLength: Uint32Array;
  /**
   * Number of particles linked in both this frame and the previous slot (slotGap = 1 only; steps
   * across a gap are not reported here).
   */
  stepCount: number;
  /** For each step, the index into x/y/trackId of the particle that made it. */
  stepParticle: Int32Array;
  /** Raw one-frame steps, µm (not drift corrected). */
  dx: Float64Array;
  dy: Float64Array;
  /** Track ids that ended on this frame (not seen for more than the gap allowance), with their lengths. */
  endedCount: number;
  endedTrackId: Uint32Array;
  endedLength: Uint32Array;
  /** Last positions of the tracks that ended, µm. */
  endedX: Float64Array;
  endedY: Float64Array;
  /** Field of view, µm: bounding box of the data seen so far (or given by the run). */
  field: { xMin: number; xMax: number; yMin: number; yMax: number };
  /**
   * The frame's sums over its one-frame steps in x and y, when the pipeline made them (it keeps
   * them for its own CVE, at no extra cost); hand-made frames may leave this out, and detectors
   * then form the same sums themselves (see {@link StepSums}).
   */
  sums?: StepSums;
}

/**
 * Sums over a frame's one-frame steps, x and y together, µm²: the terms of the
 * covariance-based estimator (Vestergaard, Blainey & Flyvbjerg 2014, Phys. Rev. E 89:022726)
 * for the raw steps d and for the residuals r = d − m about the frame's mean step m. A pair is a
 * step whose track also made a step into the previous slot; its product is with that step (for
 * residuals, with that step's residual about its own frame's mean).
 */
export interface StepSums {
  /** Steps summed (all of the frame's steps). */
  steps: number;
  /** Σ(dx² + dy²). */
  squares: number;
  /** Steps with a previous step, and Σ(dx·dx₋₁ + dy·dy₋₁) over them. */
  pairs: number;
  products: number;
  /** Σdx and Σdy (the frame's mean step is these over `steps`). */
  sumX: number;
  sumY: number;
  /** Σ(rx² + ry²), and its parts Σrx² and Σry². */
  residualSquares: number;
  residualSquaresX: number;
  residualSquaresY: number;
  /**
   * Steps with a previous step made on a frame of at least 2 steps (a residual about a mean of
   * one step is 0 by construction), and Σ(rx·rx₋₁ + ry·ry₋₁) over them.
   */
  residualPairs: number;
  residualProducts: number;
}
