import type { Frame } from '../frame.js';
import { DIMER_DIFFUSION_RATIO } from '../physics/clusterDiffusionRatios.js';
import { mediumViscosity } from '../physics/mediumViscosity.js';
import { stokesEinsteinDiffusion } from '../physics/stokesEinsteinDiffusion.js';
import { Random } from '../stats/random.js';
import { brownianWindowStep } from './brownianWindowStep.js';
import { resolveSimulationOptions, type ResolvedSimulationOptions } from './resolveSimulationOptions.js';
import type { FrameTruth, SimulationEvent } from './simulationEvent.js';
import type { SimulationOptions } from './simulationOptions.js';
import type { SimulationTruth } from './simulationTruth.js';

/**
 * A simulated run: iterate it for the events; after the iteration has ended, `truth()` gives
 * the ground truth of that run. Each new iteration restarts the same seeded run.
 */
export interface SimulationRun extends Iterable<SimulationEvent> {
  /** The validated options with every default filled in. */
  readonly options: ResolvedSimulationOptions;
  /** Truth of the latest (complete) iteration; throws `Error` (code JOSTLE_E_SIMULATION_INCOMPLETE) before one has ended. */
  truth(): SimulationTruth;
}

/** Distinct PRNG streams, so that timing faults or detection noise never change the particles' paths. */
function streamSeed(seed: number, stream: number): number {
  return (Math.imul(seed >>> 0, 0x9e3779b1) + Math.imul(stream + 1, 0x85ebca6b)) >>> 0;
}

/** Log-normal deviate with the given mean and coefficient of variation (mean preserved). */
function logNormal(random: Random, mean: number, cv: number): number {
  if (cv === 0) return mean;
  const s2 = Math.log(1 + cv * cv);
  return mean * Math.exp(-0.5 * s2 + Math.sqrt(s2) * random.normal());
}

/** Wrap a coordinate into [min, min + side). */
function wrap(value: number, min: number, side: number): number {
  const u = (value - min) % side;
  return min + (u < 0 ? u + side : u);
}

/**
 * The physically honest simulator: Brownian particles in a periodic box larger than the field
 * of view, imaged through a camera with exposure blur, localization error, missed and spurious
 * detections, with stage, thermal, aggregation and timing faults on demand
 * (generator of detectors.md §7).
 *
 * Physics. Each particle walks in the sample with its own D (log-normal spread about the
 * Stokes–Einstein value D = k_BT/(6πηr) at the true temperature, viscosity from the medium);
 * frame k is exposed over [kΔt, kΔt + t_E] and its centroid is the time average of the image
 * position over the exposure, drawn exactly by {@link brownianWindowStep} (Savin & Doyle 2005
 * blur), so MSD(nΔt) = 2dD(nΔt − t_E/3) + 2dσ² (estimators.md §1). With rotation or heating
 * (or `alwaysSubStep`) the exposure is split into `subSteps` exact sub-windows; otherwise one
 * exact whole-window draw is used, which has the same law at 1/20 of the cost. The
 * common-mode motion (drift, bumps, vibration, rotation about the field centre) is averaged
 * over each sub-window (vibration analytically). Dimers (clumping) move rigidly at
 * 0.718·D (estimators.md §8, `DIMER_DIFFUSION_RATIO`). Detections closer than `minResolvable`
 * become one centroid at their midpoint with summed intensity. Localization noise (σ per axis)
 * is added to each reported centroid after merging.
 *
 * Stream. A `temperature` event (reported log) is emitted at t = 0, interval, 2·interval, ...
 * before the first frame at or after that time; `frame` events follow in slot order. A frame's
 * `t` is its exposure start plus timestamp jitter and clock faults; its `index` counts emitted
 * frames (the rig's counter does not know about dropped frames; a duplicate repeats the index).
 * Track ids start at 1; a particle gets a new id each time it enters view (field and focus), and
 * keeps it through missed detections. Each event holds fresh arrays.
 *
 * Complexity: O(frames · (N_box · subSteps + N log N)) time (N_box instead of N_box · subSteps on the whole-window path), O(N_box) memory, where N_box is the
 * number of particles in the box (1.2–3× `particles`, ×2.25 more with rotation, ×3 with a depth of field).
 *
 * @param options simulation options (validated at once; throws RangeError naming a bad option)
 * @returns a re-iterable run with `truth()`
 * @example
 * const run = simulate({ seed: 3, frames: 5, particles: 10, diffusion: 0.5 });
 * for (const event of run) if (event.type === 'frame') console.log(event.frame.count);
 * run.truth().diffusion.expected; // → 0.5
 */
export function simulate(options: SimulationOptions): SimulationRun {
  const resolved = resolveSimulationOptions(options);
  let latest: SimulationTruth | null = null;
  return {
    options: resolved,
    [Symbol.iterator](): Iterator<SimulationEvent> {
      return generate(resolved, (truth) => {
        latest = truth;
      });
    },
    truth(): SimulationTruth {
      if (latest === null) {
        const error = new Error('simulation truth requires a complete iteration') as Error & { code: string };
        error.code = 'JOSTLE_E_SIMULATION_INCOMPLETE';
        throw error;
      }
      return latest;
    },
  };
}

function* generate(o: ResolvedSimulationOptions, done: (truth: SimulationTruth) => void): Generator<SimulationEvent> {
  const physics = new Random(o.seed);
  const setup = new Random(streamSeed(o.seed, 1));
  const detect = new Random(streamSeed(o.seed, 2));
  const timing = new Random(streamSeed(o.seed, 3));
  const sensor = new Random(streamSeed(o.seed, 4));
  const sticking = new Random(streamSeed(o.seed, 5));

  const { width, height } = o.field;
  const dt = o.frameInterval;
  const exposure = o.exposure;
  const M = o.subSteps;
  const h = exposure / M;
  const gap = dt - exposure;
  const cx = width / 2;
  const cy = height / 2;
  // The box is a periodic square around the field with a margin, so that a particle leaving the
  // field does not come straight back in at the opposite edge. With rotation it is wide enough
  // that the field's circumcircle lies inside it (rotation never wraps a visible particle).
  const side = o.rotation ? 1.5 * Math.max(width, height) + 10 : 1.1 * Math.max(width, height) + 20;
  const xMin = cx - side / 2;
  const yMin = cy - side / 2;
  const depth = o.depthOfField;
  const slab = depth === null ? 0 : 3 * depth;
  const zMin = -slab / 2;
  const nBox = Math.round((o.particles * side * side * (depth === null ? 1 : 3)) / (width * height));
  const oscillatorIndex = o.oscillator ? nBox : -1;
  const n = nBox + (o.oscillator ? 1 : 0);

  // ---- temperature and D ----
  const reported = o.reportedCelsius;
  const heating = o.heating;
  const trueCelsius = (t: number): number => {
    if (reported === null) return Number.NaN;
    let c = reported + o.temperatureMismatch;
    if (heating && t >= heating.start) c += heating.step + (heating.ratePerMinute / 60) * (t - heating.start);
    return c;
  };
  const baseDiffusionAt = (t: number): number => {
    if (o.diffusionMode === 'fixed') return o.diffusion;
    const c = trueCelsius(t);
    return stokesEinsteinDiffusion(c, mediumViscosity(o.medium!, c), o.radius!);
  };
  const constantDiffusion = heating === null ? baseDiffusionAt(0) : Number.NaN;
  const diffusionAt = (t: number): number => (heating === null ? constantDiffusion : baseDiffusionAt(t));

  // ---- particles ----
  const sx = new Float64Array(n);
  const sy = new Float64Array(n);
  const sz = new Float64Array(n);
  const factor = new Float64Array(n); // per-particle D / base D
  const brightness = new Float64Array(n);
  const flowing = new Uint8Array(n);
  const partner = new Int32Array(n).fill(-1);
  const leaderOf = new Int32Array(n).fill(-1);
  const offX = new Float64Array(n);
  const offY = new Float64Array(n);
  const offZ = new Float64Array(n);
  const dimerFactor = new Float64Array(n);
  const subX = new Float64Array(n); // sample-frame sub-window means, for followers
  const subY = new Float64Array(n);
  const subZ = new Float64Array(n);
  const accX = new Float64Array(n); // exposure-averaged image positions
  const accY = new Float64Array(n);
  const accZ = new Float64Array(n);
  const startX = new Float64Array(n);
  const startY = new Float64Array(n);
  const startZ = new Float64Array(n);
  const trackId = new Uint32Array(n);
  const visiblePrev = new Uint8Array(n);
  const step = new Float64Array(2);
  const minSep2 = o.minSeparation * o.minSeparation;
  for (let i = 0; i < nBox; i++) {
    factor[i] = logNormal(setup, 1, o.diffusionSpread);
    brightness[i] = logNormal(setup, o.intensity.mean, o.intensity.cv);
    flowing[i] = o.flow !== null && setup.uniform() < o.flow.fraction ? 1 : 0;
    // Random sequential placement, rejecting hard-core overlaps (up to 200 tries).
    for (let tries = 0; tries < 200; tries++) {
      sx[i] = xMin + side * setup.uniform();
      sy[i] = yMin + side * setup.uniform();
      if (minSep2 === 0) break;
      let clash = false;
      for (let j = 0; j < i && !clash; j++) {
        const ddx = sx[i] - sx[j];
        const ddy = sy[i] - sy[j];
        clash = ddx * ddx + ddy * ddy < minSep2;
      }
      if (!clash) break;
    }
    sz[i] = depth === null ? 0 : zMin + slab * setup.uniform();
  }
  if (oscillatorIndex >= 0) {
    sx[oscillatorIndex] = cx;
    sy[oscillatorIndex] = cy;
    brightness[oscillatorIndex] = o.intensity.mean;
  }

  // ---- common-mode motion ----
  const driftOffset = (t: number, axis: 0 | 1): number => {
    let offset = 0;
    for (let d = 0; d < o.drift.length; d++) {
      const from = o.drift[d].start;
      if (t <= from) break;
      const until = d + 1 < o.drift.length ? Math.min(t, o.drift[d + 1].start) : t;
      offset += o.drift[d].velocity[axis] * (until - from);
    }
    return offset;
  };
  /** Average over [a, b] of the stage offset (drift, bumps, vibration) along an axis, µm. */
  const commonAverage = (a: number, b: number, axis: 0 | 1): number => {
    let value = 0.5 * (driftOffset(a, axis) + driftOffset(b, axis)); // exact for linear drift
    const span = b - a;
    for (const j of o.jump) {
      const size = axis === 0 ? j.dx : j.dy;
      if (span > 0) {
        if (b > j.t) value += (size * (b - Math.max(a, j.t))) / span;
      } else if (a >= j.t) {
        value += size; // instantaneous (stroboscopic) value
      }
    }
    for (const v of o.vibration) {
      if ((v.axis === 'x') !== (axis === 0) || b < v.start || (span > 0 && b === v.start)) continue;
      const w = 2 * Math.PI * v.frequency;
      const lo = Math.max(a, v.start) - v.start;
      const hi = b - v.start;
      if (span > 0) {
        // (1/span)∫ A sin(w u + φ) du over the part of the window after the start.
        value += (v.amplitude * (Math.cos(w * lo + v.phase) - Math.cos(w * hi + v.phase))) / (w * span);
      } else {
        value += v.amplitude * Math.sin(w * hi + v.phase);
      }
    }
    return value;
  };
  const oscillatorAverage = (a: number, b: number): number => {
    const osc = o.oscillator!;
    const w = 2 * Math.PI * osc.frequency;
    if (b - a <= 0) return osc.amplitude * Math.sin(w * a);
    return (osc.amplitude * (Math.cos(w * a) - Math.cos(w * b))) / (w * (b - a));
  };
  const angleAt = (t: number): number => (o.rotation && t > o.rotation.start ? o.rotation.omega * (t - o.rotation.start) : 0);

  // ---- truth ----
  const droppedSlots: number[] = [];
  const duplicatedSlots: number[] = [];
  const clumpEvents: { t: number; a: number; b: number }[] = [];
  const profile: { t: number; celsius: number; diffusion: number }[] = [];
  let meanFactor = 0;
  for (let i = 0; i < nBox; i++) meanFactor += factor[i] / Math.max(1, nBox);
  if (nBox === 0) meanFactor = 1;

  let nextId = 1;
  let emitted = 0;
  let frameIndex = 0;
  let dropRemaining = 0;
  let nextLog = 0;
  
  const halfDepth = depth === null ? Infinity : depth / 2;
  const wholeWindow = !o.alwaysSubStep && o.rotation === null && heating === null;
  const hasFlow = o.flow !== null;
  const flowVx = o.flow ? o.flow.velocity[0] : 0;
  const flowVy = o.flow ? o.flow.velocity[1] : 0;

  /** Moves every particle by a window of `span` s starting at `a`, and fills the sub-window means sub*. */
  const advance = (a: number, span: number, dBase: number): void => {
    const flowOn = hasFlow && a + span / 2 >= o.flow!.start;
    for (let i = 0; i < nBox; i++) {
      const leader = leaderOf[i];
      if (leader >= 0 && leader !== i) {
        // follower of a dimer: rigidly attached to its leader (processed earlier, leader < i)
        sx[i] = sx[leader] + offX[i];
        sy[i] = sy[leader] + offY[i];
        sz[i] = sz[leader] + offZ[i];
        subX[i] = subX[leader] + offX[i];
        subY[i] = subY[leader] + offY[i];
        subZ[i] = subZ[leader] + offZ[i];
        continue;
      }
      const d = dBase * (leader === i ? dimerFactor[i] : factor[i]);
      brownianWindowStep(physics, d, span, step);
      subX[i] = sx[i] + step[1];
      sx[i] += step[0];
      brownianWindowStep(physics, d, span, step);
      subY[i] = sy[i] + step[1];
      sy[i] += step[0];
      if (depth !== null) {
        brownianWindowStep(physics, d, span, step);
        subZ[i] = sz[i] + step[1];
        sz[i] += step[0];
      }
      if (flowOn && flowing[i]) {
        subX[i] += 0.5 * flowVx * span;
        subY[i] += 0.5 * flowVy * span;
        sx[i] += flowVx * span;
        sy[i] += flowVy * span;
      }
    }
  };

  /** Image position (after rotation about the field centre and the stage offset) of a sample point. */
  const imageX = (x: number, y: number, cos: number, sin: number, ox: number): number => cx + cos * (x - cx) - sin * (y - cy) + ox;
  const imageY = (x: number, y: number, cos: number, sin: number, oy: number): number => cy + sin * (x - cx) + cos * (y - cy) + oy;

  for (let k = 0; k < o.frames; k++) {
    const tStart = k * dt;
    // reported temperature log, on the true clock
    if (reported !== null) {
      while (nextLog <= tStart + 1e-9 * dt) {
        const celsius = reported + (o.temperatureSensorNoise > 0 ? o.temperatureSensorNoise * sensor.normal() : 0);
        profile.push({ t: nextLog, celsius: trueCelsius(nextLog), diffusion: baseDiffusionAt(nextLog) * meanFactor });
        yield { type: 'temperature', t: nextLog, celsius };
        nextLog += o.temperatureLogInterval;
      }
    }

    // wrap free particles and leaders into the box at the frame start; followers ride along
    for (let i = 0; i < nBox; i++) {
      const leader = leaderOf[i];
      if (leader >= 0 && leader !== i) {
        sx[i] = sx[leader] + offX[i];
        sy[i] = sy[leader] + offY[i];
        sz[i] = sz[leader] + offZ[i];
      } else {
        sx[i] = wrap(sx[i], xMin, side);
        sy[i] = wrap(sy[i], yMin, side);
        if (depth !== null) sz[i] = wrap(sz[i], zMin, slab);
      }
      startX[i] = sx[i];
      startY[i] = sy[i];
      startZ[i] = sz[i];
      accX[i] = 0;
      accY[i] = 0;
      accZ[i] = 0;
    }
    if (oscillatorIndex >= 0) {
      accX[oscillatorIndex] = 0;
      accY[oscillatorIndex] = 0;
    }

    const weight = 1 / M;
    if (wholeWindow) {
      // Nothing inside the exposure couples to the path (no rotation, constant D), so the
      // exposure mean is drawn exactly in one window (the M → ∞ limit of sub-step averaging);
      // the stage offset is still averaged over the M sub-windows.
      let ox = 0;
      let oy = 0;
      for (let j = 0; j < M; j++) {
        ox += weight * commonAverage(tStart + j * h, tStart + (j + 1) * h, 0);
        oy += weight * commonAverage(tStart + j * h, tStart + (j + 1) * h, 1);
      }
      if (exposure > 0) {
        advance(tStart, exposure, diffusionAt(tStart + exposure / 2));
      } else {
        for (let i = 0; i < nBox; i++) {
          subX[i] = sx[i];
          subY[i] = sy[i];
          subZ[i] = sz[i];
        }
      }
      for (let i = 0; i < nBox; i++) {
        accX[i] = subX[i] + ox;
        accY[i] = subY[i] + oy;
        accZ[i] = subZ[i];
      }
      if (oscillatorIndex >= 0) {
        const swing = oscillatorAverage(tStart, tStart + exposure);
        accX[oscillatorIndex] = (o.oscillator!.axis === 'x' ? cx + swing : cx) + ox;
        accY[oscillatorIndex] = (o.oscillator!.axis === 'y' ? cy + swing : cy) + oy;
      }
    }
    // exposure: M sub-windows, each exact for the Brownian part
    for (let j = 0; j < (wholeWindow ? 0 : M); j++) {
      const a = tStart + j * h;
      const b = a + h;
      const mid = a + h / 2;
      const dBase = diffusionAt(mid);
      const ox = commonAverage(a, b, 0);
      const oy = commonAverage(a, b, 1);
      const angle = angleAt(mid);
      const cos = Math.cos(angle);
      const sin = Math.sin(angle);
      if (h > 0) {
        advance(a, h, dBase);
      } else {
        for (let i = 0; i < nBox; i++) {
          subX[i] = sx[i];
          subY[i] = sy[i];
          subZ[i] = sz[i];
        }
      }
      for (let i = 0; i < nBox; i++) {
        accX[i] += weight * imageX(subX[i], subY[i], cos, sin, ox);
        accY[i] += weight * imageY(subX[i], subY[i], cos, sin, oy);
        accZ[i] += weight * subZ[i];
      }
      if (oscillatorIndex >= 0) {
        const swing = oscillatorAverage(a, b);
        const px = o.oscillator!.axis === 'x' ? cx + swing : cx;
        const py = o.oscillator!.axis === 'y' ? cy + swing : cy;
        accX[oscillatorIndex] += weight * imageX(px, py, cos, sin, ox);
        accY[oscillatorIndex] += weight * imageY(px, py, cos, sin, oy);
      }
    }
    if (gap > 0) advance(tStart + exposure, gap, diffusionAt(tStart + exposure + gap / 2));

    // hard-core repulsion: reject the whole frame's move of both particles of an overlapping pair
    if (minSep2 > 0) {
      const mid = tStart + exposure / 2;
      const ox = commonAverage(mid, mid, 0);
      const oy = commonAverage(mid, mid, 1);
      const angle = angleAt(mid);
      const cos = Math.cos(angle);
      const sin = Math.sin(angle);
      for (let pass = 0; pass < 5; pass++) {
        const order = freeOrder(nBox, leaderOf, sx);
        let changed = false;
        for (let p = 0; p < order.length; p++) {
          const i = order[p];
          for (let q = p + 1; q < order.length; q++) {
            const j = order[q];
            const ddx = sx[j] - sx[i];
            if (ddx * ddx >= minSep2) break;
            const ddy = sy[j] - sy[i];
            if (ddx * ddx + ddy * ddy >= minSep2) continue;
            for (const r of [i, j]) {
              if (sx[r] === startX[r] && sy[r] === startY[r]) continue;
              sx[r] = startX[r];
              sy[r] = startY[r];
              sz[r] = startZ[r];
              accX[r] = imageX(startX[r], startY[r], cos, sin, ox);
              accY[r] = imageY(startX[r], startY[r], cos, sin, oy);
              accZ[r] = startZ[r];
              changed = true;
            }
          }
        }
        if (!changed) break;
      }
    }

    // clumping: free particles within contact stick with the given probability per frame
    const tEnd = tStart + dt;
    if (o.clumping && tEnd >= o.clumping.start) {
      const contact = o.clumping.contactDistance;
      const contact2 = contact * contact;
      const order = freeOrder(nBox, leaderOf, sx);
      for (let p = 0; p < order.length; p++) {
        const i = order[p];
        if (leaderOf[i] >= 0) continue;
        for (let q = p + 1; q < order.length; q++) {
          const j = order[q];
          const ddx = sx[j] - sx[i];
          if (ddx * ddx >= contact2) break;
          if (leaderOf[j] >= 0) continue;
          const ddy = sy[j] - sy[i];
          const ddz = depth === null ? 0 : sz[j] - sz[i];
          if (ddx * ddx + ddy * ddy + ddz * ddz >= contact2) continue;
          if (sticking.uniform() >= o.clumping.stickProbability) continue;
          const leader = Math.min(i, j);
          const follower = Math.max(i, j);
          leaderOf[leader] = leader;
          leaderOf[follower] = leader;
          partner[leader] = follower;
          partner[follower] = leader;
          offX[follower] = sx[follower] - sx[leader];
          offY[follower] = sy[follower] - sy[leader];
          offZ[follower] = sz[follower] - sz[leader];
          dimerFactor[leader] = (DIMER_DIFFUSION_RATIO * (factor[i] + factor[j])) / 2;
          clumpEvents.push({ t: tEnd, a: leader, b: follower });
          break;
        }
      }
    }

    // ---- detection ----
    const sigma = o.focus && tStart >= o.focus.start ? o.focus.localizationError : o.localizationError;
    const cand: number[] = [];
    const candX: number[] = [];
    const candY: number[] = [];
    const candZ: number[] = [];
    for (let i = 0; i < n; i++) {
      const x = wrap(accX[i], xMin, side);
      const y = wrap(accY[i], yMin, side);
      const z = depth === null || i === oscillatorIndex ? 0 : wrap(accZ[i], zMin, slab);
      const visible = x >= 0 && x <= width && y >= 0 && y <= height && Math.abs(z) < halfDepth;
      if (visible && !visiblePrev[i]) trackId[i] = nextId++;
      visiblePrev[i] = visible ? 1 : 0;
      if (!visible) continue;
      if (o.missProbability > 0 && detect.uniform() < o.missProbability) continue;
      cand.push(i);
      candX.push(x);
      candY.push(y);
      candZ.push(z);
    }
    const m = cand.length;
    const mergedWith = new Int32Array(m).fill(-1);
    const absorbed = new Uint8Array(m);
    const mergedX = Float64Array.from(candX);
    const mergedY = Float64Array.from(candY);
    const mergedZ = Float64Array.from(candZ);
    const mergedI = new Float64Array(m);
    for (let c = 0; c < m; c++) {
      const i = cand[c];
      mergedI[c] = depth === null ? brightness[i] : brightness[i] * Math.exp((-2 * candZ[c] * candZ[c]) / (depth * depth));
    }
    if (o.minResolvable > 0 && m > 1) {
      // sort-and-sweep on x; greedy one-to-one merging of unresolved pairs
      const res2 = o.minResolvable * o.minResolvable;
      const order = Array.from({ length: m }, (_, c) => c).sort((p, q) => candX[p] - candX[q]);
      for (let p = 0; p < m; p++) {
        const a = order[p];
        if (absorbed[a] || mergedWith[a] >= 0) continue;
        for (let q = p + 1; q < m; q++) {
          const b = order[q];
          const ddx = candX[b] - candX[a];
          if (ddx * ddx >= res2) break;
          if (absorbed[b] || mergedWith[b] >= 0) continue;
          const ddy = candY[b] - candY[a];
          if (ddx * ddx + ddy * ddy >= res2) continue;
          // keep the lower particle index (its track id survives), absorb the other
          const keep = cand[a] < cand[b] ? a : b;
          const drop = keep === a ? b : a;
          mergedX[keep] = 0.5 * (candX[a] + candX[b]);
          mergedY[keep] = 0.5 * (candY[a] + candY[b]);
          mergedZ[keep] = 0.5 * (candZ[a] + candZ[b]);
          mergedI[keep] = mergedI[a] + mergedI[b];
          mergedWith[keep] = cand[drop];
          absorbed[drop] = 1;
          break;
        }
      }
    }
    const spurious = o.spuriousPerFrame > 0 ? detect.poisson(o.spuriousPerFrame) : 0;
    let count = spurious;
    for (let c = 0; c < m; c++) if (!absorbed[c]) count++;
    const fx = new Float64Array(count);
    const fy = new Float64Array(count);
    const fz = o.reportZ ? new Float64Array(count) : undefined;
    const fid = o.ids ? new Uint32Array(count) : undefined;
    const fi = new Float64Array(count);
    const truthId = new Int32Array(count);
    const truthMerged = new Int32Array(count);
    let w = 0;
    for (let c = 0; c < m; c++) {
      if (absorbed[c]) continue;
      fx[w] = mergedX[c] + sigma * detect.normal();
      fy[w] = mergedY[c] + sigma * detect.normal();
      if (fz) fz[w] = mergedZ[c] + sigma * detect.normal();
      if (fid) fid[w] = trackId[cand[c]];
      fi[w] = mergedI[c];
      truthId[w] = cand[c];
      truthMerged[w] = mergedWith[c];
      w++;
    }
    for (let s = 0; s < spurious; s++) {
      fx[w] = width * detect.uniform();
      fy[w] = height * detect.uniform();
      if (fz) fz[w] = depth! * (detect.uniform() - 0.5);
      if (fid) fid[w] = nextId++;
      fi[w] = logNormal(detect, o.intensity.mean, o.intensity.cv);
      truthId[w] = -1;
      truthMerged[w] = -1;
      w++;
    }

    // ---- timing faults ----
    let dropped = false;
    if (dropRemaining > 0) {
      dropped = true;
      dropRemaining--;
    } else if (o.droppedFrames && timing.uniform() < o.droppedFrames.probability) {
      // burst length 1 + geometric, mean `burst` frames
      let length = 1;
      const stay = 1 - 1 / o.droppedFrames.burst;
      while (timing.uniform() < stay) length++;
      dropped = true;
      dropRemaining = length - 1;
    }
    const jitter = o.timestampJitter > 0 ? o.timestampJitter * timing.normal() : 0;
    const duplicate = o.duplicatedFrames !== null && timing.uniform() < o.duplicatedFrames.probability;
    if (dropped) {
      droppedSlots.push(k);
      continue;
    }
    const clock = o.clockJump && tStart >= o.clockJump.t ? -o.clockJump.by : 0;
    const frame: Frame = { index: frameIndex++, t: tStart + jitter + clock, count, x: fx, y: fy, intensity: fi };
    if (fz) frame.z = fz;
    if (fid) frame.id = fid;
    const celsius = reported === null ? null : trueCelsius(tStart);
    const truth: FrameTruth = { slot: k, trueTime: tStart, celsius, localizationError: sigma, truthId, mergedWith: truthMerged, duplicate: false };
    emitted++;
    yield { type: 'frame', frame, truth };
    if (duplicate) {
      duplicatedSlots.push(k);
      emitted++;
      yield { type: 'frame', frame, truth: { ...truth, duplicate: true } };
    }
  }

  // ---- truth ----
  const d0 = diffusionAt(0);
  const faults: { kind: string; start: number }[] = [];
  for (const d of o.drift) faults.push({ kind: 'drift', start: d.start });
  for (const j of o.jump) faults.push({ kind: 'jump', start: j.t });
  if (o.rotation) faults.push({ kind: 'rotation', start: o.rotation.start });
  if (o.flow) faults.push({ kind: 'flow', start: o.flow.start });
  for (const v of o.vibration) faults.push({ kind: 'vibration', start: v.start });
  if (o.heating) faults.push({ kind: 'heating', start: o.heating.start });
  if (o.temperatureMismatch !== 0) faults.push({ kind: 'temperatureMismatch', start: 0 });
  if (o.clumping) faults.push({ kind: 'clumping', start: o.clumping.start });
  if (o.focus) faults.push({ kind: 'focus', start: o.focus.start });
  if (o.droppedFrames) faults.push({ kind: 'droppedFrames', start: 0 });
  if (o.duplicatedFrames) faults.push({ kind: 'duplicatedFrames', start: 0 });
  if (o.timestampJitter > 0) faults.push({ kind: 'timestampJitter', start: 0 });
  if (o.clockJump) faults.push({ kind: 'clockJump', start: o.clockJump.t });
  if (o.oscillator) faults.push({ kind: 'oscillator', start: 0 });
  faults.sort((a, b) => a.start - b.start);
  const perParticle: number[] = [];
  for (let i = 0; i < nBox; i++) perParticle.push(d0 * factor[i]);
  const flowParticles: number[] = [];
  for (let i = 0; i < nBox; i++) if (flowing[i]) flowParticles.push(i);
  done({
    seed: o.seed,
    frames: { slots: o.frames, emitted, frameInterval: dt, exposure },
    blur: exposure / (6 * dt),
    alpha: 1,
    localizationError: o.localizationError,
    reducedError: (o.localizationError * o.localizationError) / (d0 * meanFactor * dt),
    diffusion: {
      mode: o.diffusionMode,
      expected: o.diffusion,
      ensemble: d0 * meanFactor,
      perParticle,
      spread: o.diffusionSpread,
      radius: o.radius,
      medium: o.mediumSpec,
      dimerRatio: DIMER_DIFFUSION_RATIO,
    },
    particles: { inBox: nBox, boxSide: side, meanInField: o.particles, field: { width, height } },
    temperature: {
      reported,
      mismatch: o.temperatureMismatch,
      profile,
      heating: o.heating,
    },
    drift: o.drift.map((d) => ({ start: d.start, velocity: [d.velocity[0], d.velocity[1]] as [number, number] })),
    jumps: o.jump.map((j) => ({ ...j })),
    rotation: o.rotation,
    flow: o.flow ? { ...o.flow, particles: flowParticles } : null,
    vibration: o.vibration.map((v) => {
      const half = Math.PI * v.frequency * exposure; // ωt_E/2
      return { ...v, effectiveAmplitude: half === 0 ? v.amplitude : v.amplitude * Math.abs(Math.sin(half) / half) };
    }),
    clumping: o.clumping ? { start: o.clumping.start, onset: clumpEvents.length ? clumpEvents[0].t : null, events: clumpEvents } : null,
    focus: o.focus,
    timing: { droppedSlots, duplicatedSlots, timestampJitter: o.timestampJitter, clockJump: o.clockJump },
    oscillator: o.oscillator ? { ...o.oscillator, truthId: oscillatorIndex } : null,
    faults,
  });
}

/** Indices of free particles and dimer leaders, sorted by x (for sort-and-sweep pair searches). */
function freeOrder(nBox: number, leaderOf: Int32Array, x: Float64Array): number[] {
  const order: number[] = [];
  for (let i = 0; i < nBox; i++) if (leaderOf[i] < 0 || leaderOf[i] === i) order.push(i);
  order.sort((p, q) => x[p] - x[q]);
  return order;
}
