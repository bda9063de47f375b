// Reference greedy nearest-neighbour rule (test-only): each detection of frame t − 1 is followed
// to the nearest detection of frame t, with no exclusivity and no gate. Returns the fraction of
// interior detections whose nearest successor is a different particle, i.e. the empirical
// nearest-neighbour confusion probability P_NN of detectors.md §5.
import type { SimulatedFrame } from './simulateBrownian.js';

export function greedyConfusion(frames: SimulatedFrame[], window: { low: number; high: number }): number {
  let trials = 0;
  let confused = 0;
  for (let slot = 1; slot < frames.length; slot++) {
    const previous = frames[slot - 1];
    const current = frames[slot];
    const where = new Int32Array(current.particle.length > 0 ? Math.max(...current.particle) + 1 : 0).fill(-1);
    for (let j = 0; j < current.count; j++) where[current.particle[j]] = j;
    for (let i = 0; i < previous.count; i++) {
      const particle = previous.particle[i];
      if (particle >= where.length || where[particle] < 0) continue; // missed: no true successor
      const tx = previous.trueX[i];
      const ty = previous.trueY[i];
      if (tx < window.low || tx > window.high || ty < window.low || ty > window.high) continue;
      let best = -1;
      let bestDistance = Infinity;
      for (let j = 0; j < current.count; j++) {
        const dx = current.x[j] - previous.x[i];
        const dy = current.y[j] - previous.y[i];
        const distance = dx * dx + dy * dy;
        if (distance < bestDistance) {
          bestDistance = distance;
          best = j;
        }
      }
      trials++;
      if (current.particle[best] !== particle) confused++;
    }
  }
  return trials === 0 ? 0 : confused / trials;
}
