import { describe, expect, it } from 'vitest';
import { resolveSimulationOptions } from '../../src/simulate/resolveSimulationOptions.js';
import { scenarios } from '../../src/simulate/scenarios.js';
import { simulate } from '../../src/simulate/simulate.js';

describe('scenarios', () => {
  it('holds every named scenario of the brief', () => {
    for (const name of ['clean', 'drift', 'vibration', 'heating', 'mismatch', 'clumping', 'focus', 'dropped-frames', 'crowded', 'bad-rows', 'demo']) {
      expect(scenarios[name], name).toBeDefined();
    }
  });

  for (const [name, options] of Object.entries(scenarios)) {
    it(`${name}: validates and starts with detections in view`, () => {
      const resolved = resolveSimulationOptions(options);
      expect(resolved.frames).toBeGreaterThan(100);
      let seen = 0;
      for (const event of simulate({ ...options, frames: 5 })) if (event.type === 'frame') seen += event.frame.count;
      expect(seen).toBeGreaterThan(0);
    });
  }

  it('crowded keeps centres at least minSeparation apart in the sample (hard core, no sticking)', () => {
    // hard-core null case for clumping, detectors.md §7 negative controls; checked on unmerged truth ids
    const options = { ...scenarios.crowded, frames: 40, localizationError: 0, minResolvable: 0, exposure: 0 };
    let close = 0;
    let pairs = 0;
    for (const event of simulate(options)) {
      if (event.type !== 'frame') continue;
      const { x, y, count } = event.frame;
      for (let i = 0; i < count; i++) {
        for (let j = i + 1; j < count; j++) {
          pairs++;
          if (Math.hypot(x[i] - x[j], y[i] - y[j]) < 0.999) close++;
        }
      }
    }
    expect(pairs).toBeGreaterThan(100_000);
    expect(close / pairs).toBeLessThan(1e-4);
  });
});
