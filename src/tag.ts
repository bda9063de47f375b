/**
 * A tag: a label put on the run's data clock by the operator, from a tags file (CONTRACTS §2),
 * the rig or a dashboard. With `end` it marks a segment [start, end]; with `end: null` it is a
 * point mark at `start`.
 *
 * @example
 * const tag: Tag = { label: 'after-warmup', start: 12.5, end: 40, note: 'stage settled, 24.1 °C' };
 * const mark: Tag = { label: 'bump', start: 31.2, end: null, note: '' };
 */
export interface Tag {
  /** Short name of the segment or mark. */
  label: string;
  /** Start time, s (data clock). */
  start: number;
  /** End time, s (data clock), or null for a point mark. */
  end: number | null;
  /** Free text (may hold commas and quotes). Empty string when there is none. */
  note: string;
}
