import type { ResolvedPipelineOptions } from '../pipeline/pipelineOptions.js';
import type { Detector } from './detector.js';

/**
 * The detectors of a run, built from the pipeline options (`options.detectors.<name>` holds each
 * detector's settings; `false` turns it off).
 */
export function createDetectors(options: ResolvedPipelineOptions): Detector[] {
  void options;
  return [];
}
