import { cpus, totalmem } from 'node:os';

/** One benchmark figure: the median of several timed runs, with its range. */
export interface BenchFigure {
  name: string;
  unit: string;
  median: number;
  min: number;
  max: number;
  runs: number;
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

/** The machine line printed above every table. */
export function machineLine(): string {
  const cpu = cpus();
  return `${cpu.length} × ${cpu[0]?.model ?? 'unknown CPU'}, ${(totalmem() / 2 ** 30).toFixed(0)} GiB, Node ${process.version}`;
}

/** A Markdown table of figures, each also as a ratio to `baseline` (measured in the same run). */
export function table(figures: BenchFigure[], baseline?: BenchFigure): string {
  const lines = ['| benchmark | median | range | ratio to baseline |', '| --- | --- | --- | --- |'];
  for (const f of figures) {
    const ratio = baseline ? (f.median / baseline.median).toFixed(3) : '–';
    lines.push(`| ${f.name} | ${f.median.toExponential(2)} ${f.unit} | ${f.min.toExponential(2)}–${f.max.toExponential(2)} | ${ratio} |`);
  }
  return lines.join('\n');
}
