import { describe, expect, it } from 'vitest';
import type { Frame } from '../../src/frame.js';
import { mediumViscosity } from '../../src/physics/mediumViscosity.js';
import { stokesEinsteinDiffusion } from '../../src/physics/stokesEinsteinDiffusion.js';
import { simulate } from '../../src/simulate/simulate.js';
import type { SimulationEvent } from '../../src/simulate/simulationEvent.js';
import type { SimulationOptions } from '../../src/simulate/simulationOptions.js';
import { simulationTruth } from '../../src/simulate/simulationTruth.js';
import { perAxisMsd, trackTable } from './trackTable.js';

function frames(events: Iterable<SimulationEvent>): Frame[] {
  const out: Frame[] = [];
  for (const event of events) if (event.type === 'frame' && !event.truth.duplicate) out.push(event.frame);
  return out;
}

/** Common-mode step per frame (mean one-frame step of the ids present in both frames), µm. */
function commonSteps(list: Frame[], axis: 'x' | 'y'): number[] {
  const steps: number[] = [];
  let last = new Map<number, number>();
  for (const frame of list) {
    const now = new Map<number, number>();
    let sum = 0;
    let count = 0;
    for (let i = 0; i < frame.count; i++) {
      const id = frame.id![i];
      const value = frame[axis][i];
      now.set(id, value);
      const before = last.get(id);
      if (before !== undefined) {
        sum += value - before;
        count++;
      }
    }
    steps.push(count ? sum / count : 0);
    last = now;
  }
  return steps;
}

/** Least-squares amplitude of a sine of known frequency (plus offset and trend) in a series. */
function sineAmplitude(series: number[], times: number[], frequency: number): number {
  // normal equations for [1, t, sin ωt, cos ωt]
  const w = 2 * Math.PI * frequency;
  const rows = series.map((_, k) => [1, times[k], Math.sin(w * times[k]), Math.cos(w * times[k])]);
  const A = [0, 1, 2, 3].map((i) => [0, 1, 2, 3].map((j) => rows.reduce((s, r) => s + r[i] * r[j], 0)));
  const b = [0, 1, 2, 3].map((i) => rows.reduce((s, r, k) => s + r[i] * series[k], 0));
  // Gaussian elimination
  for (let i = 0; i < 4; i++) {
    for (let j = i + 1; j < 4; j++) {
      const f = A[j][i] / A[i][i];
      for (let c = i; c < 4; c++) A[j][c] -= f * A[i][c];
      b[j] -= f * b[i];
    }
  }
  const x = [0, 0, 0, 0];
  for (let i = 3; i >= 0; i--) {
    let s = b[i];
    for (let c = i + 1; c < 4; c++) s -= A[i][c] * x[c];
    x[i] = s / A[i][i];
  }
  return Math.hypot(x[2], x[3]);
}

const base: SimulationOptions = {
  seed: 1,
  frames: 300,
  frameInterval: 0.05,
  exposure: 0.01,
  particles: 40,
  field: { width: 40, height: 30 },
  diffusion: 0.3,
  localizationError: 0.02,
};

describe('simulate(options)', () => {
  it('reproduces the same run for the same seed, and a different one for another seed', () => {
    // common practice, no source: seeded generators are reproducible
    const a = frames(simulate({ ...base, frames: 50 }));
    const b = frames(simulate({ ...base, frames: 50 }));
    const c = frames(simulate({ ...base, frames: 50, seed: 2 }));
    expect(b.length).toBe(a.length);
    for (let k = 0; k < a.length; k++) {
      expect(Array.from(b[k].x)).toEqual(Array.from(a[k].x));
      expect(Array.from(b[k].id!)).toEqual(Array.from(a[k].id!));
    }
    expect(Array.from(c[10].x)).not.toEqual(Array.from(a[10].x));
  });

  it('restarts the same run when iterated twice, and truth() then matches simulationTruth(options)', () => {
    const run = simulate({ ...base, frames: 20 });
    expect(() => run.truth()).toThrow(/complete iteration/);
    const first = frames(run).map((f) => f.x[0]);
    const second = frames(run).map((f) => f.x[0]);
    expect(second).toEqual(first);
    expect(run.truth()).toEqual(simulationTruth({ ...base, frames: 20 }));
  });

  it('keeps the mean number in view at `particles`, with particles entering and leaving', () => {
    // uniform density in the periodic box: the count in view is binomial with mean `particles` (common practice, no source)
    // one frame from each of 60 seeds: binomial SD ≈ √(40·0.7)/√60 ≈ 0.7, so ±7 % is about 4 SE
    let total = 0;
    for (let seed = 1; seed <= 60; seed++) total += frames(simulate({ ...base, seed, frames: 1 }))[0].count;
    expect(Math.abs(total / 60 / 40 - 1)).toBeLessThan(0.07);
    const list = frames(simulate({ ...base, frames: 400, diffusion: 2 }));
    const ids = new Set<number>();
    for (const f of list) for (let i = 0; i < f.count; i++) ids.add(f.id![i]);
    const first = new Set(Array.from(list[0].id!));
    const last = new Set(Array.from(list[list.length - 1].id!));
    expect(ids.size).toBeGreaterThan(1.5 * first.size); // new tracks appeared
    expect([...first].filter((id) => last.has(id)).length).toBeLessThan(first.size); // some left
    for (const f of list) {
      for (let i = 0; i < f.count; i++) {
        expect(f.x[i]).toBeGreaterThan(-0.2);
        expect(f.x[i]).toBeLessThan(40.2);
      }
    }
  });

  it('moves the stage with the requested drift velocity from its start time', () => {
    // drift estimate v̂ = Σ m(t)/(WΔt), SE ≈ √(2D/(N·WΔt)) — Qian, Sheetz & Elson 1991 via estimators.md §10
    const options = { ...base, frames: 300, diffusion: 0.01, particles: 60, drift: { start: 5, velocity: [0.3, -0.2] as [number, number] } };
    const list = frames(simulate(options));
    const stepsX = commonSteps(list, 'x');
    const stepsY = commonSteps(list, 'y');
    const after = (steps: number[]) => steps.slice(102).reduce((s, v) => s + v, 0) / ((steps.length - 102) * 0.05);
    const before = (steps: number[]) => steps.slice(1, 100).reduce((s, v) => s + v, 0) / (99 * 0.05);
    expect(Math.abs(after(stepsX) - 0.3)).toBeLessThan(0.015);
    expect(Math.abs(after(stepsY) + 0.2)).toBeLessThan(0.015);
    expect(Math.abs(before(stepsX))).toBeLessThan(0.03);
    expect(simulationTruth(options).drift).toEqual([{ start: 5, velocity: [0.3, -0.2] }]);
  });

  it('adds a common-mode vibration with the exposure-averaged amplitude A·|sinc(ωt_E/2)|', () => {
    // exposure averaging of A·sin: A_eff = A·|sin(ωt_E/2)/(ωt_E/2)| — estimators.md §10 [C]
    const options: SimulationOptions = {
      ...base,
      frames: 300,
      exposure: 0.05,
      diffusion: 0.001,
      particles: 60,
      vibration: { start: 0, frequency: 8, amplitude: 0.5, axis: 'y' },
    };
    const list = frames(simulate(options));
    const steps = commonSteps(list, 'y');
    const path: number[] = [];
    let sum = 0;
    for (const s of steps) path.push((sum += s));
    const times = list.map((f) => f.t);
    const amplitude = sineAmplitude(path.slice(1), times.slice(1), 8);
    const expected = 0.5 * Math.abs(Math.sin(Math.PI * 8 * 0.05) / (Math.PI * 8 * 0.05)); // 0.3784 µm
    expect(Math.abs(amplitude / expected - 1)).toBeLessThan(0.02);
    expect(simulationTruth(options).vibration[0].effectiveAmplitude).toBeCloseTo(expected, 10);
    // nothing on the other axis
    const pathX: number[] = [];
    sum = 0;
    for (const s of commonSteps(list, 'x')) pathX.push((sum += s));
    expect(sineAmplitude(pathX.slice(1), times.slice(1), 8)).toBeLessThan(0.02);
  });

  it('lets a lone oscillating particle move while the others do not (vibration negative control)', () => {
    // common practice, no source: a stroboscopic camera (t_E → 0) samples A·sin(2πft) unchanged
    const options: SimulationOptions = { ...base, frames: 200, exposure: 0, diffusion: 0.001, oscillator: { amplitude: 0.4, frequency: 3 } };
    const run = simulate(options);
    const xs: number[] = [];
    const ts: number[] = [];
    for (const event of run) {
      if (event.type !== 'frame') continue;
      // the oscillator has the highest truth id (after the box particles)
      const index = Array.from(event.truth.truthId).indexOf(Math.max(...event.truth.truthId));
      xs.push(event.frame.x[index]);
      ts.push(event.frame.t);
    }
    expect(run.truth().oscillator?.truthId).toBeGreaterThan(0);
    expect(Math.abs(sineAmplitude(xs, ts, 3) / 0.4 - 1)).toBeLessThan(0.02);
    const steps = commonSteps(frames(simulate(options)), 'x');
    const pathAmplitude = sineAmplitude(steps.map((_, k) => steps.slice(0, k + 1).reduce((s, v) => s + v, 0)), ts, 3);
    expect(pathAmplitude).toBeLessThan(0.05); // diluted over ~40 particles, far below 0.4
  });

  it('turns D at the true temperature into steps: heating by 5 K raises D from 0.42875 to 0.49073 µm²/s', () => {
    // Stokes–Einstein worked values for r = 0.5 µm in water at 20 and 25 °C — estimators.md §5 [C]
    // (η from Pátek et al. 2009); stroboscopic and σ = 0, so MSD₁ per axis = 2DΔt exactly
    const options: SimulationOptions = {
      ...base,
      frames: 400,
      exposure: 0,
      localizationError: 0,
      particles: 150,
      field: { width: 80, height: 80 },
      diffusion: { radius: 0.5, celsius: 20, medium: 'water' },
      heating: { start: 10, step: 5 },
    };
    const events = [...simulate(options)];
    const early = perAxisMsd(trackTable(events, 'truth', (slot) => slot < 199), 1).value / (2 * 0.05);
    const late = perAxisMsd(trackTable(events, 'truth', (slot) => slot >= 201), 1).value / (2 * 0.05);
    expect(Math.abs(early / 0.42875 - 1)).toBeLessThan(0.02);
    expect(Math.abs(late / 0.49073 - 1)).toBeLessThan(0.02);
    // the reported log stays flat at 20 °C while the truth profile rises
    const readings = events.filter((e) => e.type === 'temperature');
    expect(readings.length).toBe(20);
    for (const r of readings) expect(r.type === 'temperature' && r.celsius).toBe(20);
    const truth = simulationTruth(options);
    expect(truth.temperature.profile.at(-1)!.celsius).toBe(25);
    expect(truth.diffusion.expected).toBeCloseTo(stokesEinsteinDiffusion(20, mediumViscosity({ kind: 'water' }, 20), 0.5), 12);
  });

  it('makes clumped dimers move at ≈ 0.718 D while free particles keep D', () => {
    // dimer/monomer diffusion ratio 0.718 for two touching spheres — estimators.md §8 [C]
    // (Stimson & Jeffery 1926 axial friction, transverse friction by a shell model)
    const options: SimulationOptions = {
      seed: 9,
      frames: 500,
      frameInterval: 0.05,
      exposure: 0,
      localizationError: 0,
      particles: 300,
      field: { width: 40, height: 40 },
      diffusion: 0.5,
      clumping: { start: 0, stickProbability: 1, contactDistance: 1 },
    };
    const run = simulate(options);
    const events = [...run];
    const truth = run.truth();
    expect(truth.clumping!.onset).not.toBeNull();
    const stuckAt = new Map<number, number>();
    for (const e of truth.clumping!.events) stuckAt.set(e.a, e.t);
    const table = trackTable(events, 'truth', (slot) => slot >= 100);
    const monomer = new Set<number>();
    for (let i = 0; i < truth.particles.inBox; i++) monomer.add(i);
    for (const e of truth.clumping!.events) {
      monomer.delete(e.a);
      monomer.delete(e.b);
    }
    const early = new Set([...stuckAt].filter(([, t]) => t < 100 * 0.05).map(([a]) => a));
    const dimer = perAxisMsd(table, 1, (key) => early.has(key));
    const free = perAxisMsd(table, 1, (key) => monomer.has(key));
    expect(dimer.count).toBeGreaterThan(20_000);
    expect(Math.abs(dimer.value / (2 * 0.5 * 0.05) / 0.718 - 1)).toBeLessThan(0.03);
    expect(Math.abs(free.value / (2 * 0.5 * 0.05) - 1)).toBeLessThan(0.03);
  });

  it('reports two unresolved particles as one centroid with summed intensity (dimers at twice the intensity)', () => {
    // common practice, no source: below the optical resolution two spots image as one
    const options: SimulationOptions = {
      seed: 4,
      frames: 60,
      exposure: 0,
      localizationError: 0,
      particles: 200,
      field: { width: 30, height: 30 },
      diffusion: 0.2,
      intensity: { mean: 1000, cv: 0 },
      clumping: { start: 0, stickProbability: 1, contactDistance: 0.8 },
      minResolvable: 1.0,
    };
    let merged = 0;
    for (const event of simulate(options)) {
      if (event.type !== 'frame') continue;
      for (let i = 0; i < event.frame.count; i++) {
        if (event.truth.mergedWith[i] >= 0) {
          merged++;
          expect(event.frame.intensity![i]).toBe(2000);
          expect(event.truth.mergedWith[i]).toBeGreaterThan(event.truth.truthId[i]);
        } else if (event.truth.truthId[i] >= 0) {
          expect(event.frame.intensity![i]).toBe(1000);
        }
      }
    }
    expect(merged).toBeGreaterThan(100);
  });

  it('shows dropped frames as time gaps and lists them in the truth', () => {
    // frame-drop signature δ_k > 1.5Δt — detectors.md §6(a)
    const options: SimulationOptions = { ...base, frames: 400, droppedFrames: { probability: 0.03, burst: 2 } };
    const run = simulate(options);
    const list = frames(run);
    const truth = run.truth();
    expect(truth.timing.droppedSlots.length).toBeGreaterThan(5);
    expect(list.length).toBe(400 - truth.timing.droppedSlots.length);
    const dropped = new Set(truth.timing.droppedSlots);
    let missing = 0;
    for (let k = 1; k < list.length; k++) {
      const gap = Math.round((list[k].t - list[k - 1].t) / 0.05);
      expect(gap).toBeGreaterThanOrEqual(1);
      missing += gap - 1;
      expect(list[k].index).toBe(list[k - 1].index + 1); // the rig's counter does not skip
    }
    const leading = [...dropped].filter((s) => s < Math.round(list[0].t / 0.05)).length;
    expect(missing + leading + [...dropped].filter((s) => s > Math.round(list.at(-1)!.t / 0.05)).length).toBe(dropped.size);
  });

  it('repeats duplicated frames, jitters timestamps and sets the clock back at a clock jump', () => {
    // timing faults as defined in detectors.md §6(a); jitter SD checked by 1.4826·MAD (common practice)
    const options: SimulationOptions = {
      ...base,
      frames: 400,
      duplicatedFrames: { probability: 0.02 },
      timestampJitter: 0.001,
      clockJump: { t: 15, by: 2 },
    };
    const run = simulate(options);
    const all = [...run].filter((e) => e.type === 'frame');
    const dups = all.filter((e) => e.type === 'frame' && e.truth.duplicate);
    expect(dups.length).toBe(run.truth().timing.duplicatedSlots.length);
    expect(dups.length).toBeGreaterThan(2);
    const residuals: number[] = [];
    let backwards = 0;
    for (let k = 1; k < all.length; k++) {
      const a = all[k - 1];
      const b = all[k];
      if (a.type !== 'frame' || b.type !== 'frame') continue;
      if (b.truth.duplicate) {
        expect(b.frame.t).toBe(a.frame.t);
        expect(b.frame.index).toBe(a.frame.index);
        continue;
      }
      if (b.frame.t < a.frame.t) backwards++;
      const clock = b.truth.trueTime >= 15 ? -2 : 0;
      residuals.push(b.frame.t - b.truth.trueTime - clock);
    }
    expect(backwards).toBe(1);
    const sorted = residuals.map(Math.abs).sort((p, q) => p - q);
    const jitter = 1.4826 * sorted[Math.floor(sorted.length / 2)];
    expect(Math.abs(jitter / 0.001 - 1)).toBeLessThan(0.15);
  });

  it('changes σ at a focus fault without changing D', () => {
    // per axis MSD₁ = 2DΔt + 2σ² at t_E = 0 — estimators.md §1
    const options: SimulationOptions = {
      ...base,
      frames: 300,
      exposure: 0,
      diffusion: 1e-6,
      particles: 100,
      localizationError: 0.02,
      focus: { start: 7.5, localizationError: 0.08 },
    };
    const events = [...simulate(options)];
    const before = perAxisMsd(trackTable(events, 'truth', (s) => s < 150), 1).value;
    const after = perAxisMsd(trackTable(events, 'truth', (s) => s >= 150), 1).value;
    expect(Math.sqrt(before / 2) / 0.02).toBeCloseTo(1, 1);
    expect(Math.sqrt(after / 2) / 0.08).toBeCloseTo(1, 1);
  });

  it('misses detections with missProbability and adds spuriousPerFrame false ones', () => {
    // Bernoulli misses and Poisson false detections (common practice, no source)
    const clean = frames(simulate({ ...base, frames: 200 }));
    const noisy = [...simulate({ ...base, frames: 200, missProbability: 0.2, spuriousPerFrame: 3 })].filter((e) => e.type === 'frame');
    let spurious = 0;
    let real = 0;
    for (const e of noisy) {
      if (e.type !== 'frame') continue;
      for (let i = 0; i < e.frame.count; i++) (e.truth.truthId[i] < 0 ? spurious++ : real++);
    }
    const cleanCount = clean.reduce((s, f) => s + f.count, 0);
    expect(Math.abs(real / cleanCount - 0.8)).toBeLessThan(0.02);
    expect(Math.abs(spurious / 200 - 3)).toBeLessThan(0.4);
  });

  it('walks in z and detects a particle only while |z| < depthOfField/2', () => {
    // common practice, no source: a depth of field cuts a slab out of a uniform 3-D suspension
    const list = frames(simulate({ ...base, frames: 100, depthOfField: 2, reportZ: true }));
    let count = 0;
    for (const f of list) {
      for (let i = 0; i < f.count; i++) expect(Math.abs(f.z![i])).toBeLessThan(1 + 0.1);
      count += f.count;
    }
    expect(Math.abs(count / list.length / 40 - 1)).toBeLessThan(0.2);
  });
  it('bumps every position by (dx, dy) at a jump, and moves only the flowing fraction under flow', () => {
    // common practice, no source: a stage bump is a common-mode step; convection moves a subpopulation
    const options: SimulationOptions = {
      ...base,
      frames: 200,
      exposure: 0,
      diffusion: 1e-5,
      localizationError: 0,
      particles: 60,
      jump: { t: 2.5, dx: 1.5, dy: -0.5 },
      flow: { start: 5, fraction: 0.25, velocity: [0.4, 0] },
    };
    const run = simulate(options);
    const list = frames(run);
    const stepsX = commonSteps(list, 'x');
    const stepsY = commonSteps(list, 'y');
    expect(stepsX[50]).toBeCloseTo(1.5, 1);
    expect(stepsY[50]).toBeCloseTo(-0.5, 1);
    expect(Math.abs(stepsX[49])).toBeLessThan(0.02);
    const truth = run.truth();
    const flowing = new Set(truth.flow!.particles);
    expect(Math.abs(flowing.size / truth.particles.inBox - 0.25)).toBeLessThan(0.1);
    const table = trackTable([...run], 'truth', (slot) => slot > 101);
    let moving = 0;
    let still = 0;
    for (const [key, track] of table.tracks) {
      if (track.slot.length < 20) continue;
      const speed = (track.x[19] - track.x[0]) / ((track.slot[19] - track.slot[0]) * 0.05);
      if (flowing.has(key)) {
        expect(speed).toBeCloseTo(0.4, 1);
        moving++;
      } else {
        expect(Math.abs(speed)).toBeLessThan(0.1);
        still++;
      }
    }
    expect(moving).toBeGreaterThan(3);
    expect(still).toBeGreaterThan(10);
  });

  it('rotates the sample about the field centre at omega rad/s', () => {
    // common practice, no source: rigid rotation keeps the distance to the centre and turns it by ωt
    const options: SimulationOptions = {
      ...base,
      frames: 101,
      exposure: 0,
      diffusion: 1e-9,
      localizationError: 0,
      rotation: { start: 0, omega: 0.1 },
    };
    const table = trackTable(simulate(options), 'truth');
    let checked = 0;
    for (const track of table.tracks.values()) {
      if (track.slot[0] !== 0 || track.slot.at(-1) !== 100) continue;
      const a0 = Math.atan2(track.y[0] - 15, track.x[0] - 20);
      const a1 = Math.atan2(track.y.at(-1)! - 15, track.x.at(-1)! - 20);
      const turned = ((a1 - a0 + 3 * Math.PI) % (2 * Math.PI)) - Math.PI;
      expect(turned).toBeCloseTo(0.1 * 100 * 0.05, 2);
      expect(Math.hypot(track.x.at(-1)! - 20, track.y.at(-1)! - 15)).toBeCloseTo(Math.hypot(track.x[0] - 20, track.y[0] - 15), 2);
      checked++;
    }
    expect(checked).toBeGreaterThan(10);
  });
  it('offsets the true temperature by temperatureMismatch: +2.5 K at 20 °C raises D by ≈ 7 %', () => {
    // d ln D/dT ≈ 2.79 %/K at 20 °C and 2.61 %/K at 25 °C — estimators.md §5 [C]; over 20 → 22.5 °C
    // the ratio is exp(∫ d ln D) ≈ 1.070 (±0.002 for the slope's variation)
    const options: SimulationOptions = {
      ...base,
      frames: 200,
      exposure: 0,
      localizationError: 0,
      particles: 150,
      field: { width: 80, height: 80 },
      diffusion: { radius: 0.5, celsius: 20 },
      temperatureMismatch: 2.5,
    };
    const run = simulate(options);
    const events = [...run];
    const truth = run.truth();
    expect(Math.abs(truth.diffusion.expected / 0.42875 - 1)).toBeLessThan(1e-4);
    expect(Math.abs(truth.diffusion.ensemble / truth.diffusion.expected - 1.07)).toBeLessThan(0.003);
    const measured = perAxisMsd(trackTable(events, 'truth'), 1).value / (2 * 0.05);
    expect(Math.abs(measured / truth.diffusion.ensemble - 1)).toBeLessThan(0.02);
    for (const e of events) if (e.type === 'temperature') expect(e.celsius).toBe(20);
  });

  it('lets particles stick only from clumping.start on', () => {
    // common practice, no source: the fault's onset is the earliest possible sticking time
    const run = simulate({
      seed: 12,
      frames: 100,
      particles: 300,
      field: { width: 40, height: 40 },
      diffusion: 0.5,
      clumping: { start: 2, stickProbability: 1, contactDistance: 1 },
    });
    for (const _ of run);
    const clumping = run.truth().clumping!;
    expect(clumping.events.length).toBeGreaterThan(10);
    expect(clumping.onset).toBeGreaterThanOrEqual(2);
    for (const e of clumping.events) expect(e.t).toBeGreaterThanOrEqual(2);
  });
});
