import { cpus, totalmem } from 'node:os';

/** One benchmark figure: the median of several timed runs, with its range. */
export interface BenchFigure {
  name: string;
  unit: string;
  median: number;
  min: number;
  max: number;
  runs: number;
  /**
   * With {@link measureInterleaved}: the median over rounds of this figure's rate divided by the
   * first entry's rate in the same round (steadier than a ratio of medians on a shared machine).
   */
  ratioToFirst?: number;
}

/**
 * Times `work` (which returns the amount of work done, e.g. centroids) `runs` times after
 * `warmup` untimed runs, and returns the rate per second: median and range. Benchmarks are never
 * tests: figures are printed, not asserted.
 */
export function measureRate(name: string, unit: string, work: () => number, runs = 5, warmup = 1): BenchFigure {
  for (let i = 0; i < warmup; i++) work();
  const rates: number[] = [];
  for (let i = 0; i < runs; i++) {
    const start = process.hrtime.bigint();
    const amount = work();
    const seconds = Number(process.hrtime.bigint() - start) / 1e9;
    rates.push(amount / seconds);
  }
  rates.sort((a, b) => a - b);
  return { name, unit, median: rates[Math.floor(rates.length / 2)], min: rates[0], max: rates[rates.length - 1], runs };
}

/** Async variant of measureRate. */
export async function measureRateAsync(name: string, unit: string, work: () => Promise<number>, runs = 5, warmup = 1): Promise<BenchFigure> {
  for (let i = 0; i < warmup; i++) await work();
  const rates: number[] = [];
  for (let i = 0; i < runs; i++) {
    const start = process.hrtime.bigint();
    const amount = await work();
    const seconds = Number(process.hrtime.bigint() - start) / 1e9;
    rates.push(amount / seconds);
  }
  rates.sort((a, b) => a - b);
  return { name, unit, median: rates[Math.floor(rates.length / 2)], min: rates[0], max: rates[rates.length - 1], runs };
}

/** One entry of {@link measureInterleaved}. */
export interface BenchEntry {
  name: string;
  unit: string;
  work: () => number | Promise<number>;
}

/**
 * Times several benchmarks in interleaved rounds (entry 1, 2, …, then again, the order rotating
 * each round) after one untimed warm-up of each, so that a machine whose speed drifts (other jobs
 * on shared cores) slows every entry alike. Each figure also carries the median of its per-round
 * ratio to the first entry (the baseline), which `table` prints.
 */
export async function measureInterleaved(entries: BenchEntry[], runs = 5): Promise<BenchFigure[]> {
  for (const entry of entries) await entry.work();
  const rates: number[][] = entries.map(() => []);
  for (let round = 0; round < runs; round++) {
    for (let k = 0; k < entries.length; k++) {
      const e = (k + round) % entries.length;
      const start = process.hrtime.bigint();
      const amount = await entries[e].work();
      const seconds = Number(process.hrtime.bigint() - start) / 1e9;
      rates[e][round] = amount / seconds;
    }
  }
  const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)];
  return entries.map((entry, e) => {
    const sorted = [...rates[e]].sort((a, b) => a - b);
    return {
      name: entry.name,
      unit: entry.unit,
      median: median(rates[e]),
      min: sorted[0],
      max: sorted[sorted.length - 1],
      runs,
      ratioToFirst: median(rates[e].map((r, round) => r / rates[0][round])),
    };
  });
}

/** The machine line printed above every table. */
export function machineLine(): string {
  const cpu = cpus();
  return `${cpu.length} × ${cpu[0]?.model ?? 'unknown CPU'}, ${(totalmem() / 2 ** 30).toFixed(0)} GiB, Node ${process.version}`;
}

/**
 * A Markdown table of figures, each also as a ratio to `baseline` (measured in the same run): the
 * median per-round ratio when the figures come from one {@link measureInterleaved}, else the
 * ratio of medians.
 */
export function table(figures: BenchFigure[], baseline?: BenchFigure): string {
  const lines = ['| benchmark | median | range | ratio to baseline |', '| --- | --- | --- | --- |'];
  for (const f of figures) {
    const ratio = f.ratioToFirst !== undefined && baseline?.ratioToFirst !== undefined ? f.ratioToFirst.toFixed(3) : baseline ? (f.median / baseline.median).toFixed(3) : '–';
    lines.push(`| ${f.name} | ${f.median.toExponential(2)} ${f.unit} | ${f.min.toExponential(2)}–${f.max.toExponential(2)} | ${ratio} |`);
  }
  return lines.join('\n');
}
