import { describe, expect, it } from 'vitest';
import type { Condition } from '../../../src/alerts/condition.js';
import { ClumpingDetector, type ClumpingSummary } from '../../../src/detectors/clumping/clumpingDetector.js';
import { Pipeline } from '../../../src/pipeline/pipeline.js';
import { refreshContext } from '../../../src/pipeline/refreshContext.js';
import type { Report } from '../../../src/report.js';
import { scenarios } from '../../../src/simulate/scenarios.js';
import { simulate } from '../../../src/simulate/simulate.js';
import type { SimulationOptions } from '../../../src/simulate/simulationOptions.js';

/** The detector, recording every condition it returns. */
class RecordingClumping extends ClumpingDetector {
  readonly seen: Condition[] = [];
  override push(...args: Parameters<ClumpingDetector['push']>): readonly Condition[] {
    const out = super.push(...args);
    this.seen.push(...out);
    return out;
  }
}

/** The real pipeline (linking by the simulator's ids, FrameSteps, context) with this detector alone. */
function analyze(options: SimulationOptions, detector = new RecordingClumping()): Report {
  const pipeline = new Pipeline(
    { frameInterval: options.frameInterval as number, exposure: options.exposure, radius: 0.5, medium: 'water' },
    () => [detector],
    refreshContext,
  );
  for (const event of simulate(options)) {
    if (event.type === 'frame') pipeline.push(event.frame);
    else pipeline.pushTemperature(event.t, event.celsius);
  }
  pipeline.finish();
  return pipeline.report();
}

describe('ClumpingDetector in the pipeline', { timeout: 120_000 }, () => {
  it('the pipeline with ClumpingDetector warns on beads that start sticking after the baseline', () => {
    // physical simulator: dimers at 0.718 D (estimators.md §8) with summed intensity when unresolved
    const detector = new RecordingClumping();
    const report = analyze({ ...scenarios.clumping, frames: 4800, clumping: { start: 70, stickProbability: 0.3, contactDistance: 1.0 } }, detector);
    const alerts = report.alerts.filter((a) => a.kind === 'clumping' && a.level !== 'info');
    const summary = (report as unknown as { detectors: { clumping: ClumpingSummary } }).detectors.clumping;
    expect(alerts.length).toBeGreaterThan(0);
    // the detector's own warn comes after the onset (an earlier `info` may open the alert)
    const firstWarn = detector.seen.find((c) => c.level === 'warn' || c.level === 'stop');
    expect(firstWarn).toBeDefined();
    expect(firstWarn!.t).toBeGreaterThan(70);
    expect(firstWarn!.t).toBeLessThan(130);
    expect(summary.design.persistenceFrames).toBeGreaterThan(2);
    expect(summary.dimerFraction).not.toBeNull();
  });

  it('the pipeline with ClumpingDetector raises no warn on the crowded hard-core scenario', () => {
    // detectors.md §3: hard-core crowding is the key negative control
    const report = analyze(scenarios.crowded);
    const alerts = report.alerts.filter((a) => a.kind === 'clumping' && a.level !== 'info');
    expect(alerts).toEqual([]);
  });
});
