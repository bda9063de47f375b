import type { Frame } from '../../src/frame.js';
import { Random } from '../../src/stats/random.js';

/** Settings of the small free-diffusion generator used by pipeline tests. */
export interface BrownianSettings {
  seed: number;
  particles: number;
  frames: number;
  frameInterval: number;
  diffusion: number;
  /** Localization error per axis, µm. */
  sigma?: number;
  /** Exposure t_E, s (blur by averaging `subSteps` positions over the exposure). */
  exposure?: number;
  subSteps?: number;
  /** Drift velocity, µm/s. */
  drift?: [number, number];
  /** Field side, µm (positions start uniform in it; no boundaries). */
  field?: number;
  /** Omit ids (linking needed). */
  withoutIds?: boolean;
  /** Per-particle D log-normal CV. */
  diffusionSpread?: number;
  /** New track every `trackFrames` frames (particles are replaced), default: whole run. */
  trackFrames?: number;
}

/**
 * Generates frames of free 2-D Brownian particles with localization noise, exposure blur
 * (average of sub-frame positions over the exposure, Savin & Doyle 2005) and drift, for tests.
 */
export function brownianFrames(settings: BrownianSettings): Frame[] {
  const random = new Random(settings.seed);
  const n = settings.particles;
  const sigma = settings.sigma ?? 0;
  const exposure = settings.exposure ?? 0;
  const subSteps = exposure > 0 ? (settings.subSteps ?? 20) : 1;
  const field = settings.field ?? 100;
  const dt = settings.frameInterval;
  const drift = settings.drift ?? [0, 0];
  const trackFrames = settings.trackFrames ?? settings.frames;
  const px = new Float64Array(n);
  const py = new Float64Array(n);
  const ids = new Uint32Array(n);
  const dOf = new Float64Array(n);
  let nextId = 1;
  const reset = (i: number) => {
    px[i] = random.uniform() * field;
    py[i] = random.uniform() * field;
    ids[i] = nextId++;
    const spread = settings.diffusionSpread ?? 0;
    const s2 = Math.log(1 + spread * spread);
    dOf[i] = spread > 0 ? settings.diffusion * Math.exp(Math.sqrt(s2) * random.normal() - s2 / 2) : settings.diffusion;
  };
  for (let i = 0; i < n; i++) reset(i);
  const frames: Frame[] = [];
  for (let f = 0; f < settings.frames; f++) {
    if (f > 0 && f % trackFrames === 0) for (let i = 0; i < n; i++) reset(i);
    const x = new Float64Array(n);
    const y = new Float64Array(n);
    const t = f * dt;
    for (let i = 0; i < n; i++) {
      // Walk through the frame interval in sub-steps; average the positions during the exposure
      // (the last `exposure` seconds of the interval).
      const stepTime = exposure > 0 ? exposure / subSteps : dt;
      const preTime = dt - exposure;
      const sd = Math.sqrt(2 * dOf[i]);
      if (f > 0 && exposure > 0 && preTime > 0) {
        px[i] += sd * Math.sqrt(preTime) * random.normal();
        py[i] += sd * Math.sqrt(preTime) * random.normal();
      }
      let sx = 0;
      let sy = 0;
      if (exposure > 0) {
        for (let k = 0; k < subSteps; k++) {
          px[i] += sd * Math.sqrt(stepTime) * random.normal();
          py[i] += sd * Math.sqrt(stepTime) * random.normal();
          sx += px[i];
          sy += py[i];
        }
        sx /= subSteps;
        sy /= subSteps;
      } else {
        if (f > 0) {
          px[i] += sd * Math.sqrt(dt) * random.normal();
          py[i] += sd * Math.sqrt(dt) * random.normal();
        }
        sx = px[i];
        sy = py[i];
      }
      x[i] = sx + drift[0] * t + sigma * random.normal();
      y[i] = sy + drift[1] * t + sigma * random.normal();
    }
    frames.push({ index: f, t, count: n, x, y, ...(settings.withoutIds ? {} : { id: Uint32Array.from(ids) }) });
  }
  return frames;
}
