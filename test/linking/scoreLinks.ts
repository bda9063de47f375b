// Link scoring against the simulator's ground truth (test-only helper).
// A "true link" joins two consecutive detections of one particle at most maxGapFrames + 1 slots
// apart; it is recovered when the linker gave both the same id with nothing of that id between.
// Only links whose later detection lies in the interior window [margin, box − margin]² count, so
// particles near the open edge (fewer neighbours) do not flatter the score.
import type { SimulatedFrame } from './simulateBrownian.js';

export interface LinkScore {
  trueLinks: number;
  reportedLinks: number;
  correctLinks: number;
  /** 1 − correct / true: wrong and missed links together. */
  linkError: number;
  /** Fraction of reported links that join two different particles. */
  wrongFraction: number;
  trueGaps: number; // true links that bridge ≥ 1 missed frame
  closedGaps: number;
}

export function scoreLinks(
  frames: SimulatedFrame[],
  ids: Uint32Array[],
  particles: number,
  maxGapFrames: number,
  window: { low: number; high: number },
): LinkScore {
  const lastSlotOfParticle = new Float64Array(particles).fill(-Infinity);
  const lastOfId = new Map<number, { slot: number; particle: number }>();
  let trueLinks = 0;
  let reportedLinks = 0;
  let correctLinks = 0;
  let trueGaps = 0;
  let closedGaps = 0;
  for (let slot = 0; slot < frames.length; slot++) {
    const frame = frames[slot];
    const frameIds = ids[slot];
    for (let j = 0; j < frame.count; j++) {
      const particle = frame.particle[j];
      const id = frameIds[j];
      const inside =
        frame.trueX[j] >= window.low && frame.trueX[j] <= window.high &&
        frame.trueY[j] >= window.low && frame.trueY[j] <= window.high;
      const previousSlot = lastSlotOfParticle[particle];
      const gap = slot - previousSlot;
      const hasTrue = gap <= maxGapFrames + 1;
      const previousOfId = lastOfId.get(id);
      const correct =
        hasTrue && previousOfId !== undefined && previousOfId.particle === particle && previousOfId.slot === previousSlot;
      if (inside) {
        if (hasTrue) trueLinks++;
        if (previousOfId !== undefined) reportedLinks++;
        if (correct) correctLinks++;
        if (hasTrue && gap >= 2) {
          trueGaps++;
          if (correct) closedGaps++;
        }
      }
      lastSlotOfParticle[particle] = slot;
      lastOfId.set(id, { slot, particle });
    }
  }
  return {
    trueLinks,
    reportedLinks,
    correctLinks,
    linkError: trueLinks === 0 ? 0 : 1 - correctLinks / trueLinks,
    wrongFraction: reportedLinks === 0 ? 0 : (reportedLinks - correctLinks) / reportedLinks,
    trueGaps,
    closedGaps,
  };
}
