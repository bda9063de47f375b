import { describe, expect, it } from 'vitest';
import * as jostle from '../src/index.js';

describe('src/index.ts (the public API)', () => {
  it('exports the pipeline, the detectors, the estimators and the physics at run time', () => {
    for (const name of ['Pipeline', 'AlertEngine', 'createDetectors', 'DriftDetector', 'VibrationDetector', 'TemperatureDetector',
      'ClumpingDetector', 'cveFromSums', 'chooseEstimator', 'stokesEinsteinDiffusion', 'waterViscosity', 'Linker', 'simulate', 'scenarios', 'Random']) {
      expect(typeof (jostle as Record<string, unknown>)[name], name).not.toBe('undefined');
    }
  });
  it('builds every detector by default, and none of those turned off', () => {
    const options = jostle.resolvePipelineOptions({ frameInterval: 0.05, detectors: { vibration: false } });
    expect(jostle.createDetectors(options).map((d) => d.name)).toEqual(['timing', 'drift', 'temperature', 'clumping', 'noise', 'tracks', 'sparse']);
  });
  it('refuses an unknown detector name', () => {
    expect(() => jostle.createDetectors(jostle.resolvePipelineOptions({ frameInterval: 0.05, detectors: { wobble: {} } }))).toThrow(/unknown detector wobble/);
  });
});
