// The drift detector's per-frame median (not a test): medianInPlace over all entries (Hoare's
// quickselect) against the same call with the detector's window (the mean ± 4 standard errors),
// on fresh data each call (64 sets of N normal steps, cycled, so that branch prediction cannot
// learn one set), plus the copy alone. Prints µs per median.
// Run: node --import tsx/esm tools/bench/medianSelection.ts [N=1000] [calls=20000]
import { medianInPlace } from '../../src/detectors/drift/medianInPlace.js';
import { Random } from '../../src/stats/random.js';

const n = Number(process.argv[2] ?? 1000);
const calls = Number(process.argv[3] ?? 20_000);
const random = new Random(1);
const sets = Array.from({ length: 64 }, () => Float64Array.from({ length: n }, () => 0.04 * random.normal()));
const windows = sets.map((set) => {
  const mean = set.reduce((a, b) => a + b, 0) / n;
  const variance = set.reduce((a, b) => a + (b - mean) ** 2, 0) / (n - 1);
  return { centre: mean, halfWidth: 4 * Math.sqrt(variance / n) };
});
const scratch = new Float64Array(n);
const time = (label: string, median: (k: number) => number) => {
  let check = 0;
  const start = performance.now();
  for (let k = 0; k < calls; k++) {
    scratch.set(sets[k & 63]);
    check += median(k);
  }
  console.log(`${label.padEnd(34)} ${(((performance.now() - start) / calls) * 1000).toFixed(2)} µs per median (check ${check.toFixed(6)})`);
};
for (let round = 0; round < 3; round++) {
  time('copy only', () => 0);
  time('full selection (quickselect)', () => medianInPlace(scratch, n));
  time('window of ± 4 standard errors', (k) => medianInPlace(scratch, n, windows[k & 63].centre, windows[k & 63].halfWidth));
}
