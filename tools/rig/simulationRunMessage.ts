import type { SimulationOptions } from '../../src/simulate/simulationOptions.js';
import type { RigRunMessage } from '../../server/protocol.js';

/**
 * The `run` message a simulated rig sends: its frame interval and exposure, and — for a
 * Stokes-Einstein scenario — the bead radius, the reported temperature and the medium.
 *
 * @example
 * simulationRunMessage(scenarios.drift, 'sim-drift') // → { type: 'run', run: 'sim-drift', frameInterval: 0.05, exposure: 0.01, radius: 0.5, temperature: 21, medium: 'water', ... }
 */
export function simulationRunMessage(options: SimulationOptions, run: string | undefined, label: string): RigRunMessage {
  const frameInterval = options.frameInterval ?? 0.05;
  const message: RigRunMessage = { type: 'run', frameInterval, exposure: options.exposure ?? frameInterval, label };
  if (run !== undefined) message.run = run;
  const d = options.diffusion;
  if (d !== undefined && typeof d === 'object') {
    message.radius = d.radius;
    message.temperature = d.celsius;
    message.medium = d.medium ?? 'water';
  }
  return message;
}
