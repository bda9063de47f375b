import { describe, expect, it } from 'vitest';
import { ClosePairCandidates } from '../../../src/detectors/clumping/closePairCandidates.js';
import { PointGrid } from '../../../src/detectors/clumping/pointGrid.js';
import { Random } from '../../../src/stats/random.js';

// Invariant: the neighbour list with a skin (Verlet 1967, Phys. Rev. 159, 98) must give exactly
// the pairs of the O(N²) definition on every frame, whatever the tracks do between rebuilds
// (common practice, no source).

function bruteForce(x: Float64Array, y: Float64Array, n: number, r: number): number[] {
  const keys: number[] = [];
  for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) if ((x[i] - x[j]) ** 2 + (y[i] - y[j]) ** 2 <= r * r) keys.push(i * n + j);
  return keys;
}

interface Walker { id: number; row: number; x: number; y: number; vx: number; vy: number }

/**
 * Random walkers in clusters (so that real pairs occur), with births, deaths, frames a walker
 * skips, rows reused after a death as the pipeline does, and optionally a common shift.
 */
function* scene(options: { seed: number; walkers: number; frames: number; step: number; rowMode: 'table' | 'index' | 'bad'; shiftEvery?: number; deathRate?: number; fast?: number; speed?: number }) {
  const random = new Random(options.seed);
  let nextId = 1;
  const freeRows: number[] = [];
  let nextRow = 0;
  const live: Walker[] = [];
  const spawn = (): Walker => {
    const centre = Math.floor(random.uniform() * 6);
    // a fraction of the walkers also cross the field in a straight line
    const angle = 2 * Math.PI * random.uniform();
    const speed = random.uniform() < (options.fast ?? 0) ? (options.speed ?? 0) : 0;
    return { id: nextId++, row: freeRows.length > 0 ? (freeRows.pop() as number) : nextRow++, x: 10 * centre + 3 * random.uniform(), y: 7 * centre + 3 * random.uniform(), vx: speed * Math.cos(angle), vy: speed * Math.sin(angle) };
  };
  for (let i = 0; i < options.walkers; i++) live.push(spawn());
  for (let f = 0; f < options.frames; f++) {
    const shift = options.shiftEvery && f % options.shiftEvery === options.shiftEvery - 1 ? 2.5 : 0;
    for (const w of live) {
      w.x += options.step * random.normal() + shift + w.vx;
      w.y += options.step * random.normal() + w.vy;
    }
    // deaths and births
    for (let k = live.length - 1; k >= 0; k--) {
      if (random.uniform() < (options.deathRate ?? 0.01)) {
        freeRows.push(live[k].row);
        live.splice(k, 1);
      }
    }
    while (live.length < options.walkers && random.uniform() < 0.8) live.push(spawn());
    const shown = live.filter(() => random.uniform() > 0.05); // some skip a frame
    // the frame's order is shuffled (a rig lists particles in no fixed order)
    for (let k = shown.length - 1; k > 0; k--) {
      const j = Math.floor(random.uniform() * (k + 1));
      [shown[k], shown[j]] = [shown[j], shown[k]];
    }
    const n = shown.length;
    const x = new Float64Array(n), y = new Float64Array(n), ids = new Uint32Array(n), rows = new Int32Array(n);
    shown.forEach((w, i) => {
      x[i] = w.x;
      y[i] = w.y;
      ids[i] = w.id;
      rows[i] = options.rowMode === 'table' ? w.row : options.rowMode === 'index' ? i : f % 7 === 3 ? 0 : w.row;
    });
    yield { x, y, ids, rows, n };
  }
}

function compare(pairs: ClosePairCandidates, frames: ReturnType<typeof scene>, r: number): number {
  let out = new Float64Array(4);
  let seen = 0;
  for (const { x, y, ids, rows, n } of frames) {
    let found = pairs.find(x, y, ids, rows, n, r, out);
    if (found < 0) {
      out = new Float64Array(-found);
      found = pairs.find(x, y, ids, rows, n, r, out);
    }
    expect(Array.from(out.subarray(0, found))).toEqual(bruteForce(x, y, n, r));
    seen += found;
  }
  return seen;
}

describe('ClosePairCandidates', () => {
  it('gives the brute-force close pairs on every frame of slow walkers with births, deaths, skipped frames and reused rows, from far fewer rebuilds', () => {
    const pairs = new ClosePairCandidates(1.5);
    const seen = compare(pairs, scene({ seed: 3, walkers: 120, frames: 400, step: 0.03, rowMode: 'table' }), 1.5);
    expect(seen).toBeGreaterThan(1000); // the check saw real pairs
    expect(pairs.rebuilds).toBeGreaterThan(1); // births beyond the registration limit and movement do rebuild
    expect(pairs.rebuilds).toBeLessThan(pairs.frames / 4);
  });

  it('stays exact when a few walkers cross the field at 0.15 µm per frame among slow ones (their movement triggers the rebuilds)', () => {
    const pairs = new ClosePairCandidates(1.5);
    const seen = compare(pairs, scene({ seed: 17, walkers: 150, frames: 300, step: 0.02, rowMode: 'table', deathRate: 0, fast: 0.1, speed: 0.15 }), 1.5);
    expect(seen).toBeGreaterThan(1000);
    expect(pairs.rebuilds).toBeGreaterThan(40); // about every 5 frames (skin/2 = 0.75 µm), by a fast walker
    expect(pairs.rebuilds).toBeLessThan(pairs.frames / 3);
    expect(pairs.plainFrames).toBe(0);
  });

  it('stays exact when walkers move a skin in a frame, and then searches plainly (a rebuild every frame would cost more)', () => {
    const pairs = new ClosePairCandidates(0.2);
    const seen = compare(pairs, scene({ seed: 8, walkers: 80, frames: 600, step: 0.4, rowMode: 'table' }), 1);
    expect(seen).toBeGreaterThan(100);
    expect(pairs.rebuilds).toBeLessThan(60); // 13 per 256 + 13 frames
    expect(pairs.plainFrames).toBeGreaterThan(500);
  });

  it('stays exact with a common shift of 2.5 µm every 20 frames (beyond the skin: the list is rebuilt)', () => {
    const pairs = new ClosePairCandidates(1);
    compare(pairs, scene({ seed: 11, walkers: 100, frames: 200, step: 0.02, rowMode: 'table', shiftEvery: 20 }), 1.2);
    expect(pairs.rebuilds).toBeGreaterThanOrEqual(10);
  });

  it('stays exact when rows are the frame index (a different row for a track on each frame, as hand-made frames may pass)', () => {
    const pairs = new ClosePairCandidates(1);
    const seen = compare(pairs, scene({ seed: 5, walkers: 60, frames: 120, step: 0.05, rowMode: 'index' }), 1.5);
    expect(seen).toBeGreaterThan(100);
  });

  it('stays exact when some frames put two particles on one row (those frames are searched in full)', () => {
    const pairs = new ClosePairCandidates(1);
    compare(pairs, scene({ seed: 13, walkers: 60, frames: 120, step: 0.05, rowMode: 'bad' }), 1.5);
  });

  it('answers as PointGrid.closePairs does on one frame, including negative and huge rows', () => {
    const random = new Random(21);
    const n = 300;
    const x = new Float64Array(n), y = new Float64Array(n), ids = new Uint32Array(n);
    for (let i = 0; i < n; i++) { x[i] = 40 * random.uniform(); y[i] = 30 * random.uniform(); ids[i] = 1000 + i; }
    const grid = new PointGrid();
    grid.build(x, y, n, 1.2);
    const expected = new Float64Array(2000);
    const count = grid.closePairs(n, 1.2, expected);
    expect(count).toBeGreaterThan(20);
    for (const rows of [Int32Array.from({ length: n }, (_, i) => i), Int32Array.from({ length: n }, (_, i) => (i === 7 ? -1 : i)), Int32Array.from({ length: n }, (_, i) => i + (1 << 21))]) {
      const out = new Float64Array(2000);
      expect(new ClosePairCandidates(0.5).find(x, y, ids, rows, n, 1.2, out)).toBe(count);
      expect(out.subarray(0, count)).toEqual(expected.subarray(0, count));
    }
  });

  it('asks for a longer output when the given one is too short, and answers the same when asked again', () => {
    const x = Float64Array.of(0, 0.1, 0.2, 0.3), y = new Float64Array(4), ids = Uint32Array.of(1, 2, 3, 4), rows = Int32Array.of(0, 1, 2, 3);
    const pairs = new ClosePairCandidates(1);
    expect(pairs.find(x, y, ids, rows, 4, 1, new Float64Array(2))).toBe(-6);
    const out = new Float64Array(6);
    expect(pairs.find(x, y, ids, rows, 4, 1, out)).toBe(6);
    expect(Array.from(out)).toEqual([1, 2, 3, 6, 7, 11]);
  });

  it('rebuilds when asked for a larger r than the list was made for', () => {
    const x = Float64Array.of(0, 3), y = new Float64Array(2), ids = Uint32Array.of(1, 2), rows = Int32Array.of(0, 1);
    const pairs = new ClosePairCandidates(0.5);
    const out = new Float64Array(1);
    expect(pairs.find(x, y, ids, rows, 2, 1, out)).toBe(0);
    expect(pairs.find(x, y, ids, rows, 2, 3, out)).toBe(1);
  });

  it('rejects a skin that is not a finite positive length', () => {
    expect(() => new ClosePairCandidates(0)).toThrow(/skin/);
    expect(() => new ClosePairCandidates(Number.NaN)).toThrow(/skin/);
  });
});

describe('PointGrid#within', () => {
  it('lists every built point within r of any query point, inside or outside the grid, as a brute-force search does', () => {
    const random = new Random(4);
    const n = 250;
    const x = new Float64Array(n), y = new Float64Array(n);
    for (let i = 0; i < n; i++) { x[i] = 20 * random.uniform(); y[i] = 15 * random.uniform(); }
    const grid = new PointGrid();
    grid.build(x, y, n, 1);
    const out = new Int32Array(n);
    let total = 0;
    for (let q = 0; q < 400; q++) {
      const qx = -2 + 24 * random.uniform(), qy = -2 + 19 * random.uniform();
      const found = grid.within(qx, qy, 1, out);
      const expected: number[] = [];
      for (let i = 0; i < n; i++) if ((x[i] - qx) ** 2 + (y[i] - qy) ** 2 <= 1) expected.push(i);
      expect(Array.from(out.subarray(0, found)).sort((a, b) => a - b)).toEqual(expected);
      total += found;
    }
    expect(total).toBeGreaterThan(200);
    expect(grid.within(0, 0, 1, new Int32Array(0))).toBeLessThanOrEqual(0);
  });
});
