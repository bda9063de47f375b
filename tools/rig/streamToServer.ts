import type { Frame } from '../../src/frame.js';
import type { Tag } from '../../src/tag.js';
import type { RigClient } from './rigClient.js';

/** One event a rig streams, in data-clock order. */
export type RigEvent =
  | { type: 'frame'; frame: Frame }
  | { type: 'temperature'; t: number; celsius: number }
  | { type: 'tag'; tag: Tag };

/** Pacing of {@link streamToServer}. */
export interface StreamPacing {
  /** Data seconds per wall second (default 1: real time). */
  speed?: number;
  /** As fast as the socket allows (ignores speed). */
  fast?: boolean;
  /** Wall clock, ms (default Date.now). */
  now?: () => number;
  /** Stop early when this returns true (checked before each event). */
  stopped?: () => boolean;
}

/**
 * Streams events to a server through an open rig client, paced on the data clock: an event at
 * data time t is sent once (t − t₀)/speed seconds of wall time have passed since the first one
 * (or at once with `fast`). Frames with no centroid are still sent (they carry the timing).
 *
 * Complexity: O(events); waits with timers, never busy-loops.
 *
 * @returns frames and centroids sent
 * @example
 * await streamToServer(events, rig, { speed: 4 }) // → { frames: 1200, centroids: 48123 }
 */
export async function streamToServer(events: Iterable<RigEvent> | AsyncIterable<RigEvent>, rig: RigClient, pacing: StreamPacing = {}): Promise<{ frames: number; centroids: number }> {
  const speed = pacing.speed ?? 1;
  if (!(speed > 0 && Number.isFinite(speed))) throw new RangeError('streamToServer requires speed > 0');
  const now = pacing.now ?? Date.now;
  let t0: number | undefined;
  let wall0 = 0;
  let frames = 0;
  let centroids = 0;
  for await (const event of events) {
    if (pacing.stopped?.()) break;
    const t = event.type === 'frame' ? event.frame.t : event.type === 'tag' ? (event.tag.end ?? event.tag.start) : event.t;
    if (!pacing.fast && Number.isFinite(t)) {
      if (t0 === undefined) {
        t0 = t;
        wall0 = now();
      }
      const due = wall0 + ((t - t0) / speed) * 1000;
      const wait = due - now();
      if (wait > 1) await new Promise((resolve) => setTimeout(resolve, wait));
    }
    if (event.type === 'frame') {
      await rig.frame(event.frame);
      frames++;
      centroids += event.frame.count;
    } else if (event.type === 'temperature') await rig.temperature(event.t, event.celsius);
    else await rig.tag(event.tag);
  }
  return { frames, centroids };
}
