import { describe, expect, it } from 'vitest';
import { formatMedium } from '../../src/physics/formatMedium.js';
import { isTemperatureDependent } from '../../src/physics/isTemperatureDependent.js';
import type { Medium } from '../../src/physics/medium.js';
import { mediumTemperatureRange } from '../../src/physics/mediumTemperatureRange.js';
import { mediumViscosity } from '../../src/physics/mediumViscosity.js';
import { MediumError, parseMedium } from '../../src/physics/parseMedium.js';

// The option grammar is CONTRACTS.md §1 (--medium); the error-code convention is STYLE.md §9.
describe('parseMedium(spec)', () => {
  it('parseMedium reads the three forms of CONTRACTS §1', () => {
    expect(parseMedium('water')).toEqual({ kind: 'water' });
    expect(parseMedium('glycerol-water:0.5')).toEqual({ kind: 'glycerol-water', glycerolMassFraction: 0.5 });
    expect(parseMedium('glycerol-water:0')).toEqual({ kind: 'glycerol-water', glycerolMassFraction: 0 });
    expect(parseMedium('glycerol-water:1')).toEqual({ kind: 'glycerol-water', glycerolMassFraction: 1 });
    expect(parseMedium('viscosity:1.2')).toEqual({ kind: 'viscosity', milliPascalSeconds: 1.2 });
    expect(parseMedium('viscosity:2e1')).toEqual({ kind: 'viscosity', milliPascalSeconds: 20 });
  });

  it('parseMedium ignores surrounding white space and keyword case', () => {
    expect(parseMedium('  Water ')).toEqual({ kind: 'water' });
    expect(parseMedium('GLYCEROL-WATER: .25')).toEqual({ kind: 'glycerol-water', glycerolMassFraction: 0.25 });
  });

  it('parseMedium returns a frozen object', () => {
    expect(Object.isFrozen(parseMedium('viscosity:3'))).toBe(true);
  });

  const bad: [string, string][] = [
    ['', '""'],
    ['honey', '"honey"'],
    ['water:1', '"water:1"'],
    ['glycerol-water', '"glycerol-water"'],
    ['glycerol-water:', '"glycerol-water:"'],
    ['glycerol-water:1.5', '"1.5"'],
    ['glycerol-water:-0.1', '"-0.1"'],
    ['glycerol-water:half', '"half"'],
    ['glycerol-water:0x1', '"0x1"'],
    ['viscosity:0', '"0"'],
    ['viscosity:-1', '"-1"'],
    ['viscosity:Infinity', '"Infinity"'],
    ['viscosity:NaN', '"NaN"'],
    ['viscosity:1.2mPa', '"1.2mPa"'],
  ];
  for (const [spec, quoted] of bad) {
    it(`parseMedium(${JSON.stringify(spec)}) throws JOSTLE_E_MEDIUM naming ${quoted}`, () => {
      let caught: unknown;
      try {
        parseMedium(spec);
      } catch (error) {
        caught = error;
      }
      expect(caught).toBeInstanceOf(MediumError);
      const error = caught as MediumError;
      expect(error.code).toBe('JOSTLE_E_MEDIUM');
      expect(error.message).toContain(quoted);
      expect(error.message.endsWith('.')).toBe(false);
    });
  }
});

describe('formatMedium(medium)', () => {
  it('formatMedium writes the option text back, and parseMedium(formatMedium(m)) equals m', () => {
    const media: Medium[] = [
      { kind: 'water' },
      { kind: 'glycerol-water', glycerolMassFraction: 0.35 },
      { kind: 'glycerol-water', glycerolMassFraction: 1 / 3 },
      { kind: 'viscosity', milliPascalSeconds: 1.2 },
      { kind: 'viscosity', milliPascalSeconds: 1e-3 },
    ];
    expect(formatMedium(media[1])).toBe('glycerol-water:0.35');
    expect(formatMedium(media[3])).toBe('viscosity:1.2');
    for (const medium of media) expect(parseMedium(formatMedium(medium))).toEqual(medium);
  });
});

describe('isTemperatureDependent(medium) and mediumTemperatureRange(medium)', () => {
  it('only a fixed viscosity is temperature independent and has no range', () => {
    expect(isTemperatureDependent(parseMedium('water'))).toBe(true);
    expect(isTemperatureDependent(parseMedium('glycerol-water:0.4'))).toBe(true);
    expect(isTemperatureDependent(parseMedium('viscosity:1'))).toBe(false);
    // ranges: Pátek et al. 2009 (253.15–383.15 K) and Cheng 2008 (0–100 °C)
    expect(mediumTemperatureRange(parseMedium('water'))).toEqual([-20, 110]);
    expect(mediumTemperatureRange(parseMedium('glycerol-water:0.4'))).toEqual([0, 100]);
    expect(mediumTemperatureRange(parseMedium('viscosity:1'))).toBeNull();
  });
});

describe('mediumViscosity(medium, celsius)', () => {
  it('mediumViscosity dispatches to Pátek 2009, Cheng 2008 or the fixed value', () => {
    // Pátek 2009 at 20 °C: 1001.57 µPa·s; Cheng 2008 at C_m = 0.5, 20 °C: 6.002 mPa·s (estimators.md §6b, §6d)
    expect(mediumViscosity(parseMedium('water'), 20)).toBeCloseTo(1.00157, 5);
    expect(mediumViscosity(parseMedium('glycerol-water:0.5'), 20)).toBeCloseTo(6.002, 3);
    expect(mediumViscosity(parseMedium('viscosity:2.5'), 80)).toBe(2.5);
    expect(mediumViscosity(parseMedium('viscosity:2.5'), Number.NaN)).toBe(2.5);
    expect(mediumViscosity(parseMedium('glycerol-water:0.5'), 105)).toBeNaN();
  });
});
