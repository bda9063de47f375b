/** One close-pair episode: two tracks within r_c on consecutive frames. */
export interface PairEpisode {
  /** Smaller track id. */
  a: number;
  /** Larger track id. */
  b: number;
  /** Time the episode began, s. */
  since: number;
  /** Slot it began in, and the last slot it was seen in. */
  startSlot: number;
  lastSlot: number;
  /** Frames spanned so far (lastSlot − startSlot + 1). */
  frames: number;
  /** Whether it has already been counted as persistent (once per episode). */
  persistent: boolean;
}

/**
 * Bookkeeping of close pairs across frames: each frame, `see(a, b, …)` every pair within r_c, then
 * `sweep(slot)` drops the episodes not seen on that frame. A pair missing for a dropped frame
 * (slot gap) continues; a pair apart on a delivered frame ends. O(pairs) per frame.
 *
 * @example
 * const e = new ClosePairEpisodes();
 * e.see(3, 9, 0, 0.0, 1); e.sweep(0); e.see(9, 3, 1, 0.05, 1); e.sweep(1);
 * e.get(3, 9)?.frames; // → 2
 */
export class ClosePairEpisodes {
  // Keyed by a·2³² + b, exact while a < 2²¹ (below 2⁵³); pairs with a larger smaller id are keyed
  // by string in a second map. A number key makes no string per pair per frame.
  private readonly episodes = new Map<number, PairEpisode>();
  private readonly wideEpisodes = new Map<string, PairEpisode>();

  /** Number of open episodes. */
  get size(): number {
    return this.episodes.size + this.wideEpisodes.size;
  }

  /** Record that tracks a and b are within r_c at `slot` (time t s); `slotGap` is the frame's gap. Returns the episode. */
  see(idA: number, idB: number, slot: number, t: number, slotGap: number): PairEpisode {
    const a = Math.min(idA, idB);
    const b = Math.max(idA, idB);
    const narrow = a < NARROW_LIMIT;
    const key = narrow ? a * PAIR_SCALE + b : 0;
    let episode = narrow ? this.episodes.get(key) : this.wideEpisodes.get(`${a}:${b}`);
    if (episode && episode.lastSlot !== slot - slotGap && episode.lastSlot !== slot) episode = undefined;
    if (!episode) {
      episode = { a, b, since: t, startSlot: slot, lastSlot: slot, frames: 1, persistent: false };
      if (narrow) this.episodes.set(key, episode);
      else this.wideEpisodes.set(`${a}:${b}`, episode);
    } else {
      episode.lastSlot = slot;
      episode.frames = slot - episode.startSlot + 1;
    }
    return episode;
  }

  /** The open episode of tracks a and b, if any. */
  get(idA: number, idB: number): PairEpisode | undefined {
    const a = Math.min(idA, idB);
    const b = Math.max(idA, idB);
    return a < NARROW_LIMIT ? this.episodes.get(a * PAIR_SCALE + b) : this.wideEpisodes.get(`${a}:${b}`);
  }

  /** Drop the episodes not seen at `slot`. O(open episodes). */
  sweep(slot: number): void {
    for (const [key, episode] of this.episodes) if (episode.lastSlot !== slot) this.episodes.delete(key);
    for (const [key, episode] of this.wideEpisodes) if (episode.lastSlot !== slot) this.wideEpisodes.delete(key);
  }

  /** Iterate over the open episodes (those of smaller id below 2²¹ first). */
  *values(): IterableIterator<PairEpisode> {
    yield* this.episodes.values();
    yield* this.wideEpisodes.values();
  }
}

/** Track ids are below 2³²: a·2³² + b is exact in a double while a < 2²¹. */
const PAIR_SCALE = 2 ** 32;
const NARROW_LIMIT = 2 ** 21;
