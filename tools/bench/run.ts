// `npm run bench`: every benchmark figure, each with its ratio to a peer measured in the same
// run, and the target it is set against (issue 6). Figures are printed, never asserted.
// Flags: --quick (fewer runs, 10 s live runs), --skip-live (no server runs).
// The 10-minute soak is separate: node --import tsx/esm tools/bench/liveLatency.ts 1000 100 600 30 30
import { analyzeThroughput } from './analyzeThroughput.js';
import { detectorCosts } from './detectorCosts.js';
import { endToEnd, type BenchEncoding, type EndToEndResult } from './endToEnd.js';
import { machineLine, table, type BenchFigure } from './harness.js';
import { ingestThroughput } from './ingestThroughput.js';
import { liveLatency } from './liveLatency.js';
import { pipelineThroughput, sustainedPipeline } from './pipelineThroughput.js';
import { scaling, scalingTable } from './scaling.js';
import { execFileSync } from 'node:child_process';
import type { TrackMemory } from './trackMemory.js';

const quick = process.argv.includes('--quick');
const skipLive = process.argv.includes('--skip-live');
const runs = quick ? 3 : 5;
const liveSeconds = quick ? 10 : 20;
// the end-to-end target is a rate sustained for 60 s: the msgpack run is that long (the JSON peer's
// run only gives the ratio, and is kept at liveSeconds)
const sustainedSeconds = quick ? 10 : 60;
const verdicts: string[] = [];
const verdict = (name: string, figure: string, target: string, met: boolean) =>
  verdicts.push(`| ${name} | ${figure} | ${target} | ${met ? 'met' : 'not met'} |`);
const byName = (figures: BenchFigure[], prefix: string) => figures.find((f) => f.name.startsWith(prefix)) as BenchFigure;

console.log(`jostle benchmarks — ${machineLine()} — ${new Date().toISOString()}`);

console.log('\n## Pipeline only (frames in memory, ids given)\n');
const pipeline = await pipelineThroughput(runs);
console.log(table(pipeline, pipeline[0]));
{
  const full = byName(pipeline, 'pipeline, ids given, 1000');
  const ratio = full.ratioToFirst ?? full.median / pipeline[0].median;
  // The measured ceiling of that ratio: the same pipeline with no detector at all.
  const core = byName(pipeline, 'pipeline, ids given, no detectors');
  const coreRatio = core.ratioToFirst ?? core.median / pipeline[0].median;
  verdict('pipeline, 1,000 particles, 16 lags, every detector', `${full.median.toExponential(2)} centroids/s (range ${full.min.toExponential(2)}–${full.max.toExponential(2)})`, '≥ 3×10⁶/s', full.median >= 3e6);
  verdict('pipeline against the bare MSD kernel', `${(100 * ratio).toFixed(0)} % (no detector: ${(100 * coreRatio).toFixed(0)} %)`, '≥ 40 %', ratio >= 0.4);
  console.log(`\nceiling: with no detector the pipeline runs at ${(100 * coreRatio).toFixed(0)} % of the bare kernel; the detectors take ${(100 * (1 - full.median / core.median)).toFixed(0)} % of the full pipeline's time`);
  // The detectors' budget for 40 %: per frame of 1,000 centroids, 1/(0.4·kernel) − 1/(no-detector pipeline).
  const perFrameMs = (rate: number) => (1000 / rate) * 1000;
  const budget = perFrameMs(0.4 * pipeline[0].median) - perFrameMs(core.median);
  const spentMs = perFrameMs(full.median) - perFrameMs(core.median);
  const costs = detectorCosts(1000, 2000);
  const timedTotal = costs.detectors.reduce((sum, d) => sum + d.msPerFrame, 0);
  console.log(
    `detectors' budget for 40 %: ${budget.toFixed(3)} ms per frame of 1,000 centroids; they take ${spentMs.toFixed(3)} (${(spentMs / Math.max(budget, 1e-9)).toFixed(1)}× the budget). ` +
      `Split, each push timed in a separate run: ${costs.detectors.filter((d) => d.msPerFrame >= 0.0005).map((d) => `${d.name} ${(100 * d.msPerFrame / timedTotal).toFixed(0)} %`).join(', ')}`,
  );
}

{
  console.log('\n### The same over 10 s of data per run (steady state; not the verdict above)\n');
  const sustained = await sustainedPipeline(quick ? 2 : 3);
  console.log(table(sustained, sustained[0]));
}

console.log('\n## Ingest (decode and validate one frame message)\n');
let jsonIngest = Number.NaN; // JSON rows decoded per second at 1,000 per frame (for the end-to-end bound)
for (const particles of [1000, 10_000]) {
  const ingest = ingestThroughput(particles, runs);
  console.log(table(ingest, ingest[0]));
  if (particles === 1000) jsonIngest = ingest[0].median;
  const ours = byName(ingest, 'jostle ingest');
  const ratio = ours.median / ingest[0].median;
  verdict(`ingest, ${particles} per frame`, `${ours.median.toExponential(2)} centroids/s, ${ratio.toFixed(0)}× JSON rows`, '≥ 20× JSON rows', ratio >= 20);
  console.log();
}

console.log('\n## analyze (CSV → report)\n');
const analyze = await analyzeThroughput(quick ? 2 : 3);
console.log(table(analyze, analyze[0]));
verdict('analyze on a CSV (ids given)', `${byName(analyze, 'analyze, ids').median.toExponential(2)} rows/s`, '≥ 1.5×10⁶ rows/s (stretch)', byName(analyze, 'analyze, ids').median >= 1.5e6);
verdict('unlinked input (linking on, density 0.0033/µm²)', `${byName(analyze, 'analyze, unlinked').median.toExponential(2)} centroids/s`, '≥ 5×10⁵/s', byName(analyze, 'analyze, unlinked').median >= 5e5);

console.log('\n## Scaling: cost per frame against particles and lags\n');
console.log(scalingTable(scaling(quick ? 1 : 3)));

console.log('\n## Memory per live track (2 axes, 16 lags, maxLag 128)\n');
// in a fresh process with the collector exposed, so that other benchmarks' garbage does not count
const memory = JSON.parse(
  execFileSync(process.execPath, ['--expose-gc', '--import', 'tsx/esm', 'tools/bench/trackMemory.ts'], { cwd: new URL('../..', import.meta.url).pathname, encoding: 'utf8' }),
) as TrackMemory;
console.log(`layout: ring ${memory.ringBytes} B + the rest ${memory.otherBytes} B per track; measured at ${memory.tracks} tracks: ${memory.measuredPipelineOnly.toFixed(0)} B (pipeline; the table doubles), ${memory.measuredWithDetectors.toFixed(0)} B with every detector`);

if (!skipLive) {
  console.log('\n## End to end (rig process → ws loopback → decode → pipeline → recording → dashboard)\n');
  const packed = await endToEnd('msgpack', 1000, sustainedSeconds);
  // The JSON ratios from runs of equal length, in two interleaved groups of three (JSON rows,
  // JSON columns, msgpack; then msgpack, JSON columns, JSON rows), so that the load of the shared
  // machine and the phase of the run (the detectors' baselines end after 60 s of data) weigh alike
  // on each encoding; the mean of the groups' ratios. The target's peer is a JSON row-wise rig
  // (one record per particle, the server's `rows` extension); the contract's own JSON form (one
  // array of numbers per field) is reported beside it.
  const groups: Record<BenchEncoding, EndToEndResult>[] = [];
  for (let group = 0; group < 2; group++) {
    const order: BenchEncoding[] = group === 0 ? ['json-rows', 'json', 'msgpack'] : ['msgpack', 'json', 'json-rows'];
    const results = {} as Record<BenchEncoding, EndToEndResult>;
    for (const encoding of order) results[encoding] = await endToEnd(encoding, 1000, liveSeconds);
    groups.push(results);
  }
  for (const r of [...groups.flatMap((g) => [g['json-rows'], g.json, g.msgpack]), packed]) {
    console.log(`${r.encoding}: ${r.centroidsPerSecond.toExponential(2)} centroids/s over ${r.seconds.toFixed(1)} s; queue each second ${JSON.stringify(r.queue)}; ${r.dashboardMessages} dashboard messages; ${r.recordedFrames} frames recorded; CPU % of a core: server main thread ${r.cpu.serverMainThread.toFixed(0)}, server process ${r.cpu.serverProcess.toFixed(0)}, rig ${r.cpu.rig?.toFixed(0) ?? 'not measured'}`);
  }
  const mean = (values: number[]) => values.reduce((sum, v) => sum + v, 0) / values.length;
  const rowRatios = groups.map((g) => g.msgpack.centroidsPerSecond / g['json-rows'].centroidsPerSecond);
  const columnRatios = groups.map((g) => g.msgpack.centroidsPerSecond / g.json.centroidsPerSecond);
  const ratio = mean(rowRatios);
  const columnRatio = mean(columnRatios);
  console.log(`against a JSON row-wise rig, ${liveSeconds}-s runs in interleaved groups: ${rowRatios.map((r) => r.toFixed(2)).join(', ')} (mean ${ratio.toFixed(2)}); against the ${sustainedSeconds}-s msgpack run: ${(packed.centroidsPerSecond / groups[0]['json-rows'].centroidsPerSecond).toFixed(2)}`);
  console.log(`against the contract's JSON columns (not a target): ${columnRatios.map((r) => r.toFixed(2)).join(', ')} (mean ${columnRatio.toFixed(2)})`);
  // The server works frame after frame on one thread (the rig process uses about a tenth of the
  // other core), so a JSON rig's centroid costs the packed one's plus its JSON decode:
  // ratio ≈ 1 + R_packed / R_json-decode, with R_json-decode (JSON rows) from the ingest table above.
  const full = byName(pipeline, 'pipeline, ids given, 1000');
  const packedMean = mean(groups.map((g) => g.msgpack.centroidsPerSecond));
  console.log(`\nceilings: end to end is ${(packed.centroidsPerSecond / full.median).toFixed(2)}× the pipeline-only figure of this run; the JSON-rows ratio on a serial server is about 1 + ${packedMean.toExponential(2)} / ${jsonIngest.toExponential(2)} (JSON rows decode) = ${(1 + packedMean / jsonIngest).toFixed(2)}, measured ${ratio.toFixed(2)}`);
  // The server runs the pipeline on its main thread, so no encoding takes it past the
  // pipeline-only figure; on that serial thread a JSON rig's centroid costs one JSON decode more,
  // so if receiving, recording and the dashboards cost nothing the ratio would be
  // 1 + R_pipeline-only / R_json-decode. An estimate, not a ceiling: it takes the JSON decode at its
  // stand-alone rate, and inside the busy server the decode costs more, so the measured ratio can
  // pass it (2.46 against 2.34 on 2026-12-03).
  const jsonBound = 1 + full.median / jsonIngest;
  console.log(`bound of the JSON-rows ratio if only the pipeline and the JSON decode (at its stand-alone rate) cost anything: 1 + ${full.median.toExponential(2)} (pipeline only) / ${jsonIngest.toExponential(2)} (JSON rows decode) = ${jsonBound.toFixed(2)}`);
  const share = (v: number | null): string => (v === null ? 'not measured' : `${v.toFixed(0)} %`);
  console.log(`CPU over the msgpack run, in % of one core: server main thread ${share(packed.cpu.serverMainThread)} busy, server process ${share(packed.cpu.serverProcess)} (main and recording threads), rig ${share(packed.cpu.rig)}`);
  // "No growing queue": at the end of the sustained run the server is less than one second of frames behind.
  const tail = packed.queue.slice(-10);
  const behindSeconds = Math.max(0, ...tail) / packed.framesPerSecond;
  console.log(`queue over the last 10 s of the ${packed.seconds.toFixed(0)}-s run: at most ${Math.max(0, ...tail)} frames (${behindSeconds.toFixed(2)} s of frames)`);
  const sustained = packed.seconds >= 0.98 * sustainedSeconds && behindSeconds < 1;
  verdict(
    'end to end, msgpack bins, 1,000 particles',
    `${packed.centroidsPerSecond.toExponential(2)} centroids/s over ${packed.seconds.toFixed(0)} s (${sustained ? 'queue flat' : 'queue growing or run short'})`,
    '≥ 2×10⁶/s for 60 s, no growing queue',
    packed.centroidsPerSecond >= 2e6 && sustained && sustainedSeconds >= 60,
  );
  verdict(
    'end to end against a JSON row-wise rig',
    `${ratio.toFixed(2)}× (pipeline-and-decode bound ${jsonBound.toFixed(2)}×; ${columnRatio.toFixed(2)}× the contract's JSON columns)`,
    '≥ 2× JSON',
    ratio >= 2,
  );

  console.log('\n## Latency under load (1,000 particles × 100 frames/s, recording on, one dashboard)\n');
  const latency = await liveLatency(1000, 100, quick ? 20 : 30, 5, 10);
  console.log(`frame sent → pipeline done (after ${latency.warmupSeconds} s warm-up, ${latency.frames} frames): p50 ${latency.p50Ms.toFixed(1)} ms, p99 ${latency.p99Ms.toFixed(1)} ms, max ${latency.maxMs.toFixed(0)} ms; injected alerts on the dashboard socket: ${latency.alertMs.map((v) => `${v.toFixed(1)} ms`).join(', ') || 'none'}`);
  verdict('latency, 1,000 × 100 frames/s', `p50 ${latency.p50Ms.toFixed(1)} ms, p99 ${latency.p99Ms.toFixed(1)} ms`, 'p99 < 50 ms', latency.p99Ms < 50);
}

console.log('\n## Targets\n');
console.log(['| figure | measured | target | verdict |', '| --- | --- | --- | --- |', ...verdicts].join('\n'));
