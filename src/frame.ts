/**
 * One camera frame of centroids, columnar: the unit every stage of the pipeline consumes.
 *
 * Positions are in µm (already multiplied by the pixel size), time in s on the data's own clock.
 * Arrays may be longer than `count` (views into reused buffers); only the first `count` entries
 * are meaningful. Stages never mutate a frame they are given.
 *
 * @example
 * const frame: Frame = { index: 0, t: 0, count: 2,
 *   x: Float64Array.of(1.5, 8.0), y: Float64Array.of(2.0, 3.25) };
 */
export interface Frame {
  /** Integer frame index from the rig or the file (increasing). */
  index: number;
  /** Time of the frame, s. */
  t: number;
  /** Number of centroids in this frame. */
  count: number;
  /** x positions, µm. */
  x: Float64Array;
  /** y positions, µm. */
  y: Float64Array;
  /** z positions, µm (optional third axis). */
  z?: Float64Array;
  /** Track ids given by the rig (optional: without them the pipeline links). */
  id?: Uint32Array;
  /** Integrated intensity, arbitrary units (optional). */
  intensity?: Float64Array;
}
