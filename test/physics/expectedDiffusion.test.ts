import { describe, expect, it } from 'vitest';
import { defaultRadiusSd } from '../../src/physics/defaultRadiusSd.js';
import { expectedDiffusion } from '../../src/physics/expectedDiffusion.js';
import { faxenParallel } from '../../src/physics/faxenParallel.js';
import { parseMedium } from '../../src/physics/parseMedium.js';
import { Random } from '../../src/stats/random.js';

const water = parseMedium('water');

describe('expectedDiffusion({ celsius, radius, radiusSd, medium, height })', () => {
  it('in bulk water it is the Stokes–Einstein value with sd = D·radiusSd/r', () => {
    // estimators.md §5 worked value: 0.42875 µm²/s at 20 °C, r = 0.5 µm (1e-4 relative);
    // sd by first-order propagation of D ∝ 1/r (delta method, common practice, no source)
    const { value, sd } = expectedDiffusion({ celsius: 20, radius: 0.5, radiusSd: 0.01, medium: water });
    expect(Math.abs(value / 0.42875 - 1)).toBeLessThan(1e-4);
    expect(sd).toBeCloseTo((value * 0.01) / 0.5, 12);
  });

  it('with a height it is multiplied by the Faxén parallel factor (0.72144 at h/r = 2)', () => {
    // estimators.md §7 check table, Faxén ∥ at h/r = 2
    const bulk = expectedDiffusion({ celsius: 20, radius: 0.5, radiusSd: 0, medium: water });
    const near = expectedDiffusion({ celsius: 20, radius: 0.5, radiusSd: 0, medium: water, height: 1 });
    expect(near.value / bulk.value).toBeCloseTo(0.72144, 5);
    expect(near.sd).toBe(0);
  });

  it('with a height its sd includes the radius dependence of the wall factor', () => {
    // analytic derivative of D(r) = C·f(h/r)/r at fixed h, written out here independently:
    // dD/dr = −C/r² · [f(u) + u f′(u)] with f′ from differentiating the Faxén series
    const r = 0.5;
    const h = 0.8;
    const u = h / r;
    const s = 1 / u;
    const f = faxenParallel(u);
    const uFPrime = (9 / 16) * s - (3 / 8) * s ** 3 + (45 / 64) * s ** 4 + (5 / 16) * s ** 5;
    const bulk = expectedDiffusion({ celsius: 25, radius: r, radiusSd: 0, medium: water }).value;
    const c = bulk * r;
    const expectedSd = (c / r ** 2) * (f + uFPrime) * 0.015;
    const near = expectedDiffusion({ celsius: 25, radius: r, radiusSd: 0.015, medium: water, height: h });
    expect(near.sd).toBeCloseTo(expectedSd, 12);
    expect(near.sd / near.value).toBeGreaterThan(0.015 / r);
  });

  it('its sd agrees with a Monte Carlo spread of the radius (seeded)', () => {
    // first-order propagation vs simulation; 4000 draws, sd of the sample sd ≈ 1.1 % → 5 % tolerance
    const random = new Random(20261201);
    const r = 0.5;
    const radiusSd = 0.01;
    let sum = 0;
    let sumSquares = 0;
    const n = 4000;
    for (let i = 0; i < n; i++) {
      const radius = r + radiusSd * random.normal();
      const d = expectedDiffusion({ celsius: 20, radius, radiusSd: 0, medium: water, height: 0.75 }).value;
      sum += d;
      sumSquares += d * d;
    }
    const mean = sum / n;
    const sampleSd = Math.sqrt((sumSquares - n * mean * mean) / (n - 1));
    const predicted = expectedDiffusion({ celsius: 20, radius: r, radiusSd, medium: water, height: 0.75 }).sd;
    expect(Math.abs(sampleSd / predicted - 1)).toBeLessThan(0.05);
  });

  it('radiusSd defaults to defaultRadiusSd(radius) = 2 % of the radius', () => {
    // CONTRACTS.md §1 ("default documented, e.g. 2 % of the radius")
    expect(defaultRadiusSd(0.5)).toBeCloseTo(0.01, 15);
    const implicit = expectedDiffusion({ celsius: 20, radius: 0.5, medium: water });
    expect(implicit.sd / implicit.value).toBeCloseTo(0.02, 12);
  });

  it('uses the medium: glycerol–water 50 % at 20 °C slows D by 6.002/1.00157', () => {
    // Cheng 2008 check value (6.002 mPa·s) and Pátek 2009 (1.00157 mPa·s), estimators.md §6b/§6d
    const inWater = expectedDiffusion({ celsius: 20, radius: 0.5, medium: water }).value;
    const inMixture = expectedDiffusion({ celsius: 20, radius: 0.5, medium: parseMedium('glycerol-water:0.5') }).value;
    expect(inWater / inMixture).toBeCloseTo(6.002 / 1.00157, 2);
  });

  it('gives NaN for a temperature outside the medium range, and throws RangeError for bad geometry', () => {
    // bad-input policy (STYLE.md §7): samples give NaN, parameters throw
    expect(expectedDiffusion({ celsius: 150, radius: 0.5, medium: water }).value).toBeNaN();
    expect(() => expectedDiffusion({ celsius: 20, radius: 0, medium: water })).toThrow(RangeError);
    expect(() => expectedDiffusion({ celsius: 20, radius: 0.5, radiusSd: -1, medium: water })).toThrow(RangeError);
    expect(() => expectedDiffusion({ celsius: 20, radius: 0.5, medium: water, height: 0.4 })).toThrow(RangeError);
    expect(() => expectedDiffusion({ celsius: 20, radius: 0.5, medium: water, height: 0.4 })).toThrow(/height >= radius/);
  });
});
