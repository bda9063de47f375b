import type { ResolvedPipelineOptions } from '../pipeline/pipelineOptions.js';
import { ClumpingDetector } from './clumping/clumpingDetector.js';
import type { Detector } from './detector.js';
import { DriftDetector } from './drift/driftDetector.js';
import { NoiseDetector } from './quality/noiseDetector.js';
import { SparseDetector } from './quality/sparseDetector.js';
import { TimingDetector } from './quality/timingDetector.js';
import { TracksDetector } from './quality/tracksDetector.js';
import { TemperatureDetector } from './temperature/temperatureDetector.js';
import { VibrationDetector } from './vibration/vibrationDetector.js';

/** Names of the detectors, as used in `options.detectors` and in `report.detectors`. */
export const DETECTOR_NAMES = ['timing', 'drift', 'vibration', 'temperature', 'clumping', 'noise', 'tracks', 'sparse'] as const;

/** One detector's settings from the pipeline options: an object, or false to turn it off. */
function settings(options: ResolvedPipelineOptions, name: string): Record<string, unknown> | false {
  const value = options.detectors?.[name];
  if (value === false) return false;
  if (value === undefined) return {};
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    const error = new RangeError(`detector settings for ${name} must be an object or false`) as RangeError & { code: string };
    error.code = 'JOSTLE_E_OPTION';
    throw error;
  }
  return value;
}

/**
 * The detectors of a run, built from the pipeline options: `options.detectors.<name>` holds each
 * detector's settings (its thresholds; see src/detectors/README.md), `false` turns it off. The
 * run's physical settings (radius, medium, height, requested precision) are handed to the
 * detectors that use them; a detector's own settings win.
 *
 * @example
 * createDetectors(resolvePipelineOptions({ frameInterval: 0.05, detectors: { vibration: false } }))
 *   .map((d) => d.name) // → ['timing', 'drift', 'temperature', 'clumping', 'noise', 'tracks', 'sparse']
 */
export function createDetectors(options: ResolvedPipelineOptions): Detector[] {
  const unknown = Object.keys(options.detectors ?? {}).filter((name) => !(DETECTOR_NAMES as readonly string[]).includes(name));
  if (unknown.length > 0) {
    const error = new RangeError(`unknown detector ${unknown.join(', ')}: choose from ${DETECTOR_NAMES.join(', ')}`) as RangeError & { code: string };
    error.code = 'JOSTLE_E_OPTION';
    throw error;
  }
  const detectors: Detector[] = [];
  const physical = {
    ...(options.radius !== undefined ? { radius: options.radius } : {}),
    ...(options.radiusSd !== undefined ? { radiusSd: options.radiusSd } : {}),
    ...(options.height !== undefined ? { height: options.height } : {}),
    medium: options.medium,
  };
  const build: Record<(typeof DETECTOR_NAMES)[number], (own: Record<string, unknown>) => Detector> = {
    timing: (own) => new TimingDetector(own),
    drift: (own) => new DriftDetector(own),
    vibration: (own) => new VibrationDetector(own),
    temperature: (own) => new TemperatureDetector({ ...physical, ...own }),
    clumping: (own) => new ClumpingDetector(own),
    noise: (own) => new NoiseDetector({ targetPrecision: options.targetPrecision, ...own }),
    tracks: (own) => new TracksDetector(own),
    sparse: (own) => new SparseDetector({ targetPrecision: options.targetPrecision, ...own }),
  };
  for (const name of DETECTOR_NAMES) {
    const own = settings(options, name);
    if (own === false) continue;
    detectors.push(build[name](own));
  }
  return detectors;
}
