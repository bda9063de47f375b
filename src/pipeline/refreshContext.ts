import type { DetectorContext } from '../detectors/detectorContext.js';
import { cveVariance } from '../estimators/cveVariance.js';
import { expectedDiffusion } from '../physics/expectedDiffusion.js';
import { defaultRadiusSd } from '../physics/defaultRadiusSd.js';
import { parseMedium } from '../physics/parseMedium.js';
import { pointEstimate, type CorrectionContext } from './buildReport.js';
import type { Pipeline } from './pipeline.js';

/**
 * Recomputes the detectors' context from the pipeline's running totals: the pooled CVE
 * (Vestergaard, Blainey & Flyvbjerg 2014) with a constant-velocity drift removed, its model SE,
 * σ, and the Stokes-Einstein expectation at the reported temperature. O(width); the pipeline
 * calls it every 10 frames.
 *
 * @example
 * new Pipeline({ frameInterval: 0.033 }, undefined, refreshContext)
 */
export function refreshContext(pipeline: Pipeline): Partial<DetectorContext> {
  const { layout, stats, driftVelocity } = pipeline.globalStatistics();
  const o = pipeline.options;
  const out: Partial<DetectorContext> = {};
  if (layout) {
    const correction: CorrectionContext = {
      method: 'fitted',
      drift: [driftVelocity[0] * o.frameInterval, driftVelocity[1] * o.frameInterval, driftVelocity[2] * o.frameInterval],
      factor: 1,
      frameInterval: o.frameInterval,
      blur: pipeline.blurCoefficient(),
      dims: layout.dims,
    };
    const e = pointEstimate(layout, stats, 0, { name: 'cve', points: 2 }, correction, pipeline.lagFrames());
    if (e && e.steps >= 20 && e.diffusion > 0) {
      const epsilon = Math.max(-0.5, e.localizationVariance / (e.diffusion * o.frameInterval) - 2 * correction.blur);
      out.diffusion = e.diffusion;
      out.diffusionSe = Math.sqrt(cveVariance(e.diffusion, epsilon, e.steps, pipeline.tracksWithSteps()) / layout.dims);
      out.localizationError = Math.sqrt(Math.max(0, e.localizationVariance));
    }
  }
  const celsius = pipeline.currentContext().reportedTemperature;
  if (o.radius !== undefined && celsius !== undefined) {
    const cached = expectationCache.get(pipeline);
    if (cached && cached.celsius === celsius) {
      out.expectedDiffusion = cached.value;
      out.expectedDiffusionSd = cached.sd;
    } else {
      try {
        const expected = expectedDiffusion({
          celsius,
          radius: o.radius,
          radiusSd: o.radiusSd ?? defaultRadiusSd(o.radius),
          medium: parseMedium(o.medium),
          height: o.height,
        });
        expectationCache.set(pipeline, { celsius, value: expected.value, sd: expected.sd });
        out.expectedDiffusion = expected.value;
        out.expectedDiffusionSd = expected.sd;
      } catch {
        // a temperature outside the medium's valid range: no expectation
      }
    }
  }
  return out;
}

const expectationCache = new WeakMap<Pipeline, { celsius: number; value: number; sd: number }>();
