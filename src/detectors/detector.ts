import type { Condition } from '../alerts/condition.js';
import type { DetectorContext } from './detectorContext.js';
import type { FrameSteps } from './frameSteps.js';

/**
 * A detector: an initial state plus a step function, driven frame by frame. Pure: no I/O, no
 * timers; time comes in with the frame. `push` returns the conditions it decided on this frame
 * (often none). `summary` returns the detector's report fragment (JSON-serialisable).
 */
export interface Detector<Summary = unknown> {
  readonly name: string;
  push(steps: FrameSteps, context: DetectorContext): readonly Condition[];
  summary(): Summary;
}
