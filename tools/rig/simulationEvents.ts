import { simulate } from '../../src/simulate/simulate.js';
import type { SimulationOptions } from '../../src/simulate/simulationOptions.js';
import type { RigEvent } from './streamToServer.js';

/**
 * The events of a simulated run as a rig streams them: frames and temperature readings in
 * order, and the scenario's tags, each sent once the run reaches its end (a segment) or its
 * start (a point mark). Lazy: O(1) events in memory.
 *
 * @example
 * for (const event of simulationEvents(scenarios.drift)) console.log(event.type); // → 'temperature', 'frame', ...
 */
export function* simulationEvents(options: SimulationOptions): Generator<RigEvent> {
  const tags = (options.tags ?? [])
    .map((tag) => ({ label: tag.label, start: tag.start, end: tag.end ?? null, note: tag.note ?? '' }))
    .sort((a, b) => (a.end ?? a.start) - (b.end ?? b.start));
  let nextTag = 0;
  for (const event of simulate(options)) {
    const t = event.type === 'frame' ? event.frame.t : event.t;
    while (nextTag < tags.length && (tags[nextTag].end ?? tags[nextTag].start) <= t) yield { type: 'tag', tag: tags[nextTag++] };
    if (event.type === 'frame') yield { type: 'frame', frame: event.frame };
    else yield { type: 'temperature', t: event.t, celsius: event.celsius };
  }
  while (nextTag < tags.length) yield { type: 'tag', tag: tags[nextTag++] };
}
