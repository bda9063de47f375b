import type { SimulationEvent } from '../../src/simulate/simulationEvent.js';

/** Test helper: per-key position histories (slot, x, y) gathered from simulated frame events. */
export interface TrackTable {
  tracks: Map<number, { slot: number[]; x: number[]; y: number[] }>;
}

/**
 * Groups detections by `key` (the track id, or the true particle index) with their true slot.
 * Spurious detections (truth id −1) are skipped; duplicated frames are skipped.
 */
export function trackTable(events: Iterable<SimulationEvent>, key: 'id' | 'truth', keep?: (slot: number) => boolean): TrackTable {
  const tracks = new Map<number, { slot: number[]; x: number[]; y: number[] }>();
  for (const event of events) {
    if (event.type !== 'frame' || event.truth.duplicate) continue;
    if (keep && !keep(event.truth.slot)) continue;
    const { frame, truth } = event;
    for (let i = 0; i < frame.count; i++) {
      if (truth.truthId[i] < 0) continue;
      const k = key === 'id' ? frame.id![i] : truth.truthId[i];
      let track = tracks.get(k);
      if (!track) tracks.set(k, (track = { slot: [], x: [], y: [] }));
      track.slot.push(truth.slot);
      track.x.push(frame.x[i]);
      track.y.push(frame.y[i]);
    }
  }
  return { tracks };
}

/** Per-axis MSD at a lag of `lag` slots (pairs exactly `lag` slots apart within a track), µm², with the pair count. */
export function perAxisMsd(table: TrackTable, lag: number, accept?: (key: number) => boolean): { value: number; count: number } {
  let sum = 0;
  let count = 0;
  for (const [key, track] of table.tracks) {
    if (accept && !accept(key)) continue;
    const { slot, x, y } = track;
    let j = 0;
    for (let i = 0; i < slot.length; i++) {
      while (j < slot.length && slot[j] < slot[i] + lag) j++;
      if (j < slot.length && slot[j] === slot[i] + lag) {
        const dx = x[j] - x[i];
        const dy = y[j] - y[i];
        sum += dx * dx + dy * dy;
        count += 2;
      }
    }
  }
  return { value: sum / count, count };
}
