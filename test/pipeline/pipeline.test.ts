import { describe, expect, it } from 'vitest';
import type { Frame } from '../../src/frame.js';
import { Pipeline } from '../../src/pipeline/pipeline.js';
import { brownianFrames } from '../helpers/brownianFrames.js';
import { Random } from '../../src/stats/random.js';

function frame(index: number, t: number, x: number[], y: number[], id?: number[]): Frame {
  return {
    index,
    t,
    count: x.length,
    x: Float64Array.from(x),
    y: Float64Array.from(y),
    ...(id ? { id: Uint32Array.from(id) } : {}),
  };
}

function run(frames: Frame[], options: ConstructorParameters<typeof Pipeline>[0]) {
  const pipeline = new Pipeline(options);
  for (const f of frames) pipeline.push(f);
  pipeline.finish();
  return pipeline.report();
}

describe('Pipeline', () => {
  describe('#push', () => {
    it('gives the time-averaged MSD of a deterministic track: x = [0, 1, 3, 6] → 14/3, 17, 36', () => {
      // estimators.md §1 check values (exact): lags 1, 2, 3 of the 1-D track [0, 1, 3, 6].
      const xs = [0, 1, 3, 6];
      const frames = xs.map((x, i) => frame(i, i, [x], [0], [5]));
      const report = run(frames, { frameInterval: 1, exposure: 0, driftCorrection: 'none' });
      expect(report.msd.slice(0, 3).map((p) => p.value)).toEqual([
        expect.closeTo(14 / 3, 12),
        expect.closeTo(17, 12),
        expect.closeTo(36, 12),
      ]);
      expect(report.msd.map((p) => p.lag).slice(0, 3)).toEqual([1, 2, 3]);
      expect(report.msd[0].count).toBe(3);
    });

    it('recovers D, σ and α within their CIs on a long run (60,000 steps pooled)', () => {
      // D = 0.49 µm²/s is a 1 µm bead in water at 25 °C (estimators.md §5); σ = 20 nm; continuous exposure.
      const frames = brownianFrames({ seed: 3, particles: 100, frames: 600, frameInterval: 0.033, diffusion: 0.49, sigma: 0.02, exposure: 0.033, subSteps: 100 });
      const report = run(frames, { frameInterval: 0.033 });
      const d = report.diffusion.coefficient!;
      expect((d.ci95[1] - d.ci95[0]) / 0.49).toBeLessThan(0.06);
      expect(d.ci95[0]).toBeLessThan(0.49);
      expect(d.ci95[1]).toBeGreaterThan(0.49);
      const sigma = report.diffusion.localizationError!;
      expect(sigma.ci95[0]).toBeLessThan(0.02);
      expect(sigma.ci95[1]).toBeGreaterThan(0.02);
      const alpha = report.diffusion.exponent!;
      expect(alpha.ci95[0]).toBeLessThan(1);
      expect(alpha.ci95[1]).toBeGreaterThan(1);
      expect(report.diffusion.estimator!.name).toBe('cve');
    });

    it('removes a constant drift (fitted) so D is unbiased, and reports the drift velocity with a CI covering it', () => {
      const frames = brownianFrames({ seed: 4, particles: 50, frames: 600, frameInterval: 0.033, diffusion: 0.49, drift: [0.5, -0.2] });
      const report = run(frames, { frameInterval: 0.033, exposure: 0 });
      expect(report.diffusion.driftCorrection.method).toBe('fitted');
      const d = report.diffusion.coefficient!;
      expect(d.ci95[0]).toBeLessThan(0.49);
      expect(d.ci95[1]).toBeGreaterThan(0.49);
      const v = report.drift.velocity!;
      expect(v.ci95[0][0]).toBeLessThan(0.5);
      expect(v.ci95[0][1]).toBeGreaterThan(0.5);
      expect(v.ci95[1][0]).toBeLessThan(-0.2);
      expect(v.ci95[1][1]).toBeGreaterThan(-0.2);
      // Uncorrected, the CVE is biased by +1.5·v²Δt per axis (estimators.md §10): visibly above the truth.
      const raw = run(frames, { frameInterval: 0.033, exposure: 0, driftCorrection: 'none' });
      expect(raw.msd[raw.msd.length - 1].value).toBeGreaterThan(report.msd[report.msd.length - 1].value * 1.2);
    });

    it('switches to per-frame subtraction when the common mode moves more than a constant drift, and the N/(N−1) factor keeps the MSD within 1 %', () => {
      // detectors.md §1: per-frame mean subtraction shrinks the MSD by (1 − 1/N); multiply by N/(N−1).
      const frames = brownianFrames({ seed: 5, particles: 20, frames: 2000, frameInterval: 0.01, diffusion: 0.5, exposure: 0 });
      // A common-mode sine (stage vibration) of 50 nm at 7 Hz on x.
      for (const f of frames) for (let i = 0; i < f.count; i++) f.x[i] += 0.05 * Math.sin(2 * Math.PI * 7 * f.t);
      const report = run(frames, { frameInterval: 0.01, exposure: 0 });
      expect(report.diffusion.driftCorrection.method).toBe('per-frame');
      // Free diffusion, no blur: MSD(τ) = 4Dτ in 2-D.
      for (const point of report.msd.slice(0, 8)) {
        expect(Math.abs(point.value / (4 * 0.5 * point.lag) - 1)).toBeLessThan(0.01 + 3 * point.se / point.value);
      }
      const d = report.diffusion.coefficient!;
      expect(Math.abs(d.value / 0.5 - 1)).toBeLessThan(0.03);
    });

    it('refuses a frame whose time goes backwards, counts it and raises a timing alert', () => {
      const frames = [frame(0, 0, [1], [1], [1]), frame(1, 1, [2], [1], [1]), frame(2, 0.5, [3], [1], [1]), frame(3, 2, [4], [1], [1])];
      const pipeline = new Pipeline({ frameInterval: 1, exposure: 0 });
      for (const f of frames) pipeline.push(f);
      expect(pipeline.counts().backwardsFrames).toBe(1);
      expect(pipeline.counts().frames).toBe(3);
      const report = pipeline.report();
      expect(report.alerts.some((a) => a.kind === 'timing' && a.start === 0.5)).toBe(true);
    });

    it('skips non-finite centroids and duplicated ids and frames, counting each', () => {
      const pipeline = new Pipeline({ frameInterval: 1, exposure: 0 });
      pipeline.push(frame(0, 0, [1, NaN, 2], [1, 1, 2], [1, 2, 1]));
      pipeline.push(frame(1, 1, [1], [1], [1]));
      pipeline.push(frame(1, 1, [1], [1], [1]));
      pipeline.push({ ...frame(2, Infinity, [1], [1], [1]) });
      const counts = pipeline.counts();
      expect(counts.nonFinite).toBe(1);
      expect(counts.duplicateIds).toBe(1);
      expect(counts.duplicateFrames).toBe(1);
      expect(counts.rejectedFrames).toBe(1);
      expect(pipeline.report().input.frames).toBe(2);
    });

    it('returns no estimates (not zeros) while there is too little data', () => {
      const report = run([frame(0, 0, [1], [1], [1])], { frameInterval: 1 });
      expect(report.diffusion.coefficient).toBeNull();
      expect(report.msd).toEqual([]);
    });
  });

  describe('#report', () => {
    it('does not change the state: reporting midway gives the same final report (incremental equals batch)', () => {
      const frames = brownianFrames({ seed: 6, particles: 30, frames: 300, frameInterval: 0.05, diffusion: 0.3, sigma: 0.03 });
      const once = run(frames, { frameInterval: 0.05 });
      const pipeline = new Pipeline({ frameInterval: 0.05 });
      frames.forEach((f, i) => {
        pipeline.push(f);
        if (i % 37 === 0) pipeline.report();
      });
      pipeline.finish();
      const again = pipeline.report();
      expect(again.diffusion).toEqual(once.diffusion);
      expect(again.msd).toEqual(once.msd);
    });

    it('does not mutate the frames it is given', () => {
      const frames = brownianFrames({ seed: 7, particles: 5, frames: 20, frameInterval: 0.05, diffusion: 0.3 });
      const copies = frames.map((f) => ({ x: Float64Array.from(f.x), y: Float64Array.from(f.y) }));
      run(frames, { frameInterval: 0.05 });
      frames.forEach((f, i) => {
        expect(Array.from(f.x)).toEqual(Array.from(copies[i].x));
        expect(Array.from(f.y)).toEqual(Array.from(copies[i].y));
      });
    });

    it('gives D with a CI for each tagged segment and only for segments with an end', () => {
      const frames = brownianFrames({ seed: 8, particles: 40, frames: 400, frameInterval: 0.05, diffusion: 0.4 });
      // Double D after t = 10 s by stretching later steps: positions scale about their t = 10 s value.
      const pipeline = new Pipeline({ frameInterval: 0.05, exposure: 0 });
      pipeline.pushTag({ label: 'first', start: 0, end: 9.5, note: '' });
      pipeline.pushTag({ label: 'mark', start: 4, end: null, note: 'bump' });
      for (const f of frames) pipeline.push(f);
      pipeline.finish();
      const report = pipeline.report();
      expect(report.segments).toHaveLength(1);
      const segment = report.segments[0];
      expect(segment.label).toBe('first');
      expect(segment.diffusion!.ci95[0]).toBeLessThan(0.4);
      expect(segment.diffusion!.ci95[1]).toBeGreaterThan(0.4);
      expect(report.tags).toHaveLength(2);
    });

    it('links unlabelled centroids and gets the same D as with the rig\'s ids (within the CI width)', () => {
      const settings = { seed: 9, particles: 60, frames: 300, frameInterval: 0.033, diffusion: 0.49, sigma: 0.02, field: 200 };
      const withIds = run(brownianFrames(settings), { frameInterval: 0.033, exposure: 0 });
      const linked = run(brownianFrames({ ...settings, withoutIds: true }), { frameInterval: 0.033, exposure: 0 });
      const d = withIds.diffusion.coefficient!;
      expect(Math.abs(linked.diffusion.coefficient!.value - d.value)).toBeLessThan((d.ci95[1] - d.ci95[0]) / 4);
      expect(linked.input.tracks).toBeGreaterThanOrEqual(60);
      expect(linked.input.tracks).toBeLessThan(70);
    });
  });

  it('rejects contradictory options at construction with a message naming them', () => {
    expect(() => new Pipeline({ frameInterval: 0.01, exposure: 0.02 })).toThrow(/exposure/);
    expect(() => new Pipeline({ frameInterval: -1 })).toThrow(/frameInterval/);
    expect(() => new Pipeline({ frameInterval: 0.01, radiusSd: 0.01 })).toThrow(/radiusSd/);
  });
});

describe('Pipeline rolling window and third axis', () => {
  it.each([
    [2, 12],
    [3, 12],
    [2, 700],
  ] as const)('matches a brute-force per-frame-corrected MSD at every lag, with gaps and tracks coming and going (%i-D, %i particles)', (dims, particles) => {
    // With 700 particles arriving over the first 200 slots, the track table grows (256 → 512 →
    // 1024 rows) while earlier tracks are live: their rings must survive the new layout.
    // The definition, computed directly (common practice, no source): m(t) is the mean one-slot
    // step of the tracks present at t and t − 1, X(t) = Σ m, and the lag-n displacement of a track
    // present at both ends is corrected by X(t) − X(t − n); MSD(n) = N/(N−1)·Σ_axes ⟨(Δ − ΔX)²⟩,
    // with N/(N−1) = 1/(1 − frames/steps) over frames with two or more steps.
    const random = new Random(41);
    const slots = 300;
    const arrival = (p: number) => (particles > 12 ? Math.floor((p * 200) / particles) : 0);
    const pos: (number[] | null)[][] = [];
    for (let s = 0; s < slots; s++) {
      const row: (number[] | null)[] = [];
      for (let p = 0; p < particles; p++) {
        // each particle misses 10 % of the slots, and particles 0–3 are absent from slot 150 to 180
        const absent = s < arrival(p) || random.uniform() < 0.1 || (p < 4 && s >= 150 && s < 180);
        row.push(absent ? null : Array.from({ length: dims }, (_, a) => p + a + 0.1 * Math.sin(s / 7 + p) + 0.05 * random.normal() + 0.01 * s));
      }
      pos.push(row);
    }
    const frames: Frame[] = [];
    for (let s = 0; s < slots; s++) {
      if (s === 200 || s === 201) continue; // two dropped frames
      const present = pos[s].map((v, p) => (v ? p : -1)).filter((p) => p >= 0);
      frames.push({
        index: s,
        t: s * 0.01,
        count: present.length,
        x: Float64Array.from(present, (p) => (pos[s][p] as number[])[0]),
        y: Float64Array.from(present, (p) => (pos[s][p] as number[])[1]),
        ...(dims === 3 ? { z: Float64Array.from(present, (p) => (pos[s][p] as number[])[2]) } : {}),
        id: Uint32Array.from(present),
      });
    }
    const seen = (s: number) => s !== 200 && s !== 201;
    // Brute force. A track ends once it has missed more than maxGapFrames (default 2) slots, also
    // across dropped frames; a lag is only taken within one track. A frame where nobody has a one-slot step (after the dropped frames) moves X by the
    // mean per-slot displacement of the tracks that bridged the gap, times the slots bridged.
    const X: number[][] = [];
    const cumulative = new Array(dims).fill(0);
    let frames2 = 0;
    let steps2 = 0;
    const trackOf: number[][] = []; // trackOf[s][p]: track number of particle p at slot s, or −1
    const lastSeen = new Array(particles).fill(-100);
    const track = new Array(particles).fill(-1);
    let tracks = 0;
    let lastReceived = -1;
    for (let s = 0; s < slots; s++) {
      trackOf.push(new Array(particles).fill(-1));
      if (!seen(s)) { X.push(cumulative.slice()); continue; }
      const mean = new Array(dims).fill(0);
      const gapMean = new Array(dims).fill(0);
      let n = 0;
      let gaps = 0;
      for (let p = 0; p < particles; p++) {
        const v = pos[s][p];
        if (!v) continue;
        if (track[p] >= 0 && s - lastSeen[p] > 3) track[p] = -1; // a gap of more than 2 missed slots
        if (track[p] < 0) track[p] = tracks++;
        trackOf[s][p] = track[p];
        const last = lastSeen[p];
        if (last >= 0 && trackOf[last][p] === track[p]) {
          const before = pos[last][p] as number[];
          if (last === s - 1) {
            for (let a = 0; a < dims; a++) mean[a] += v[a] - before[a];
            n++;
          } else if (s - last <= 3) {
            for (let a = 0; a < dims; a++) gapMean[a] += (v[a] - before[a]) / (s - last);
            gaps++;
          }
        }
        lastSeen[p] = s;
      }
      for (let p = 0; p < particles; p++) if (track[p] >= 0 && s - lastSeen[p] > 2) track[p] = -1;
      if (n > 0) for (let a = 0; a < dims; a++) cumulative[a] += mean[a] / n;
      else if (gaps > 0) for (let a = 0; a < dims; a++) cumulative[a] += (gapMean[a] / gaps) * (s - lastReceived);
      if (n >= 2) { frames2++; steps2 += n; }
      X.push(cumulative.slice());
      lastReceived = s;
    }
    const pipeline = new Pipeline({ frameInterval: 0.01, exposure: 0, driftCorrection: 'per-frame' });
    for (const f of frames) pipeline.push(f);
    pipeline.finish();
    const report = pipeline.report();
    const factor = 1 / (1 - frames2 / steps2);
    const lags = pipeline.lagFrames();
    let compared = 0;
    for (const point of report.msd) {
      const n = Math.round(point.lag / 0.01);
      expect(Array.from(lags)).toContain(n);
      let sum = 0;
      let count = 0;
      for (let s = n; s < slots; s++) {
        for (let p = 0; p < particles; p++) {
          const now = pos[s][p];
          const then = pos[s - n][p];
          if (!now || !then || !seen(s) || !seen(s - n) || trackOf[s][p] < 0 || trackOf[s][p] !== trackOf[s - n][p]) continue;
          for (let a = 0; a < dims; a++) {
            const d = now[a] - then[a] - (X[s][a] - X[s - n][a]);
            sum += d * d;
          }
          count++;
        }
      }
      expect(point.count).toBe(count);
      expect(point.value).toBeCloseTo((sum / count) * factor, 10);
      compared++;
    }
    expect(compared).toBe(lags.length);
  });

  it('gives the rolling-window MSD over the last window only', () => {
    // Free diffusion, no blur: MSD(τ) = 4Dτ in 2-D (estimators.md §1 with σ = 0, R = 0).
    const frames = brownianFrames({ seed: 21, particles: 60, frames: 1200, frameInterval: 0.05, diffusion: 0.3 });
    const report = run(frames, { frameInterval: 0.05, exposure: 0, rollingWindowSeconds: 20 });
    const rolling = report.rolling as { msd: { lag: number; value: number; count: number }[]; from: number };
    expect(rolling.from).toBeCloseTo(59.95 - 20, 6);
    expect(rolling.msd[0].count).toBeLessThan(report.msd[0].count / 2);
    expect(Math.abs(rolling.msd[0].value / (4 * 0.3 * 0.05) - 1)).toBeLessThan(0.05);
  });

  it('chooses per-frame subtraction for a common-mode shake along z alone (3-D), and not for the same data without it', () => {
    // As the 2-D case above (detectors.md §1), with the excess summed over every tracked axis.
    const settings = { seed: 26, particles: 20, frames: 2000, frameInterval: 0.01, diffusion: 0.5, exposure: 0 };
    const xy = brownianFrames(settings);
    const zs = brownianFrames({ ...settings, seed: 27 });
    const still = xy.map((f, i) => ({ ...f, z: Float64Array.from(zs[i].x.subarray(0, f.count)) }));
    const shaken = xy.map((f, i) => ({ ...f, z: Float64Array.from(zs[i].x.subarray(0, f.count), (v) => v + 0.05 * Math.sin(2 * Math.PI * 7 * f.t)) }));
    expect(run(still, { frameInterval: 0.01, exposure: 0 }).diffusion.driftCorrection.method).toBe('fitted');
    const report = run(shaken, { frameInterval: 0.01, exposure: 0 });
    expect(report.diffusion.driftCorrection.method).toBe('per-frame');
    const z = report.diffusion.perAxis.z!;
    expect(z.ci95[0]).toBeLessThan(0.5);
    expect(z.ci95[1]).toBeGreaterThan(0.5);
  });

  it('removes a constant drift along z too with the fitted correction, so D_z is unbiased', () => {
    // A constant velocity u adds u²τ² to every axis's MSD; the increments give û = Σm/T
    // (detectors.md §1) per axis. Truth: D = 0.3 µm²/s on each axis, z creeping at 2 µm/s.
    const settings = { seed: 24, particles: 40, frames: 400, frameInterval: 0.05, diffusion: 0.3 };
    const xy = brownianFrames(settings);
    const zs = brownianFrames({ ...settings, seed: 25 });
    const frames = xy.map((f, i) => ({ ...f, z: Float64Array.from(zs[i].x.subarray(0, f.count), (v) => v + 2 * f.t) }));
    const fitted = run(frames, { frameInterval: 0.05, exposure: 0, driftCorrection: 'fitted' });
    const z = fitted.diffusion.perAxis.z!;
    expect(z.ci95[0]).toBeLessThan(0.3);
    expect(z.ci95[1]).toBeGreaterThan(0.3);
    // without a correction the drift shows: u²τ/2 = 4 × 0.05 / 2 = 0.1 µm²/s on top at the first lag
    const none = run(frames, { frameInterval: 0.05, exposure: 0, driftCorrection: 'none' });
    expect(none.diffusion.perAxis.z!.value).toBeGreaterThan(z.ci95[1]);
  });

  it('estimates D along z when frames carry z', () => {
    const settings = { seed: 22, particles: 40, frames: 400, frameInterval: 0.05, diffusion: 0.3 };
    const xy = brownianFrames(settings);
    const zs = brownianFrames({ ...settings, seed: 23 });
    const frames = xy.map((f, i) => ({ ...f, z: zs[i].x }));
    const report = run(frames, { frameInterval: 0.05, exposure: 0 });
    expect(report.input.dims).toBe(3);
    const z = report.diffusion.perAxis.z!;
    expect(z.ci95[0]).toBeLessThan(0.3);
    expect(z.ci95[1]).toBeGreaterThan(0.3);
    // MSD sums over three axes: 6Dτ
    expect(Math.abs(report.msd[0].value / (6 * 0.3 * 0.05) - 1)).toBeLessThan(0.05);
  });
});

describe('Pipeline with its detectors', () => {
  it('tells the timing detector about a duplicated frame it skips, which raises a timing alert', async () => {
    const { createDetectors } = await import('../../src/detectors/createDetectors.js');
    const frames = brownianFrames({ seed: 31, particles: 10, frames: 40, frameInterval: 0.05, diffusion: 0.3 });
    const pipeline = new Pipeline({ frameInterval: 0.05, exposure: 0 }, createDetectors);
    frames.forEach((f, i) => {
      pipeline.push(f);
      if (i === 20) pipeline.push(f); // the same frame again: same index and time
    });
    expect(pipeline.counts().duplicateFrames).toBe(1);
    const alert = pipeline.report().alerts.find((a) => a.kind === 'timing' && a.detail.key === 'timing:duplicated');
    expect(alert).toBeDefined();
    expect(alert!.start).toBeCloseTo(frames[20].t, 9);
  });

  it('gives the drift path once, in report.drift.path, and the rest of the drift summary in both places', async () => {
    // a report bound: the path is the report's largest field after the track table (common practice, no source)
    const { createDetectors } = await import('../../src/detectors/createDetectors.js');
    const frames = brownianFrames({ seed: 32, particles: 20, frames: 200, frameInterval: 0.05, diffusion: 0.3 });
    const pipeline = new Pipeline({ frameInterval: 0.05, exposure: 0 }, createDetectors);
    for (const f of frames) pipeline.push(f);
    const report = pipeline.report();
    const drift = report.drift as unknown as { path: { t: number[] }; cusum: unknown };
    const fragment = (report.detectors as Record<string, Record<string, unknown>>).drift;
    expect(drift.path.t.length).toBeGreaterThan(10);
    expect(fragment.path).toBeUndefined();
    expect(fragment.cusum).toEqual(drift.cusum);
  });
});
