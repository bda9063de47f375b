import { describe, expect, it } from 'vitest';
import { resolveSimulationOptions } from '../../src/simulate/resolveSimulationOptions.js';
import type { SimulationOptions } from '../../src/simulate/simulationOptions.js';

describe('resolveSimulationOptions(options)', () => {
  it('fills the documented defaults', () => {
    const resolved = resolveSimulationOptions({ seed: 1, frames: 10 });
    expect(resolved.frameInterval).toBe(0.05);
    expect(resolved.exposure).toBe(0.05);
    expect(resolved.subSteps).toBe(20);
    expect(resolved.particles).toBe(20);
    expect(resolved.field).toEqual({ width: 50, height: 50 });
    expect(resolved.ids).toBe(true);
    expect(resolved.positionUnit).toBe(1);
    expect(resolved.temperatureLogInterval).toBe(1);
  });

  it('computes D from radius, temperature and medium by Stokes–Einstein: 0.42875 µm²/s at 20 °C, 0.49073 at 25 °C', () => {
    // estimators.md §5 worked values [C] (r = 0.5 µm in water, η by Pátek et al. 2009), relative 1e-4
    const at20 = resolveSimulationOptions({ seed: 1, frames: 1, diffusion: { radius: 0.5, celsius: 20 } });
    const at25 = resolveSimulationOptions({ seed: 1, frames: 1, diffusion: { radius: 0.5, celsius: 25, medium: 'water' } });
    expect(Math.abs(at20.diffusion / 0.42875 - 1)).toBeLessThan(1e-4);
    expect(Math.abs(at25.diffusion / 0.49073 - 1)).toBeLessThan(1e-4);
    // r = 50 nm at 20 °C gives 4.2875 µm²/s (estimators.md §5: sizes scale as 1/r)
    const small = resolveSimulationOptions({ seed: 1, frames: 1, diffusion: { radius: 0.05, celsius: 20 } });
    expect(Math.abs(small.diffusion / 4.2875 - 1)).toBeLessThan(1e-4);
    expect(at20.reportedCelsius).toBe(20);
  });

  it('does not mutate its input', () => {
    const options: SimulationOptions = Object.freeze({ seed: 3, frames: 5, drift: Object.freeze([{ start: 2, velocity: [1, 0] as [number, number] }, { start: 1, velocity: [0, 1] as [number, number] }]) }) as SimulationOptions;
    const resolved = resolveSimulationOptions(options);
    expect(resolved.drift.map((d) => d.start)).toEqual([1, 2]);
  });

  const bad: [string, Partial<SimulationOptions>, RegExp][] = [
    ['frames', { frames: 0 }, /frames/],
    ['frameInterval', { frameInterval: -1 }, /frameInterval/],
    ['exposure > frameInterval', { frameInterval: 0.05, exposure: 0.1 }, /exposure <= frameInterval/],
    ['subSteps below 20', { subSteps: 10 }, /subSteps/],
    ['missProbability', { missProbability: 1.5 }, /missProbability/],
    ['localizationError', { localizationError: Number.NaN }, /localizationError/],
    ['diffusion', { diffusion: 0 }, /diffusion/],
    ['heating with fixed D', { diffusion: 1, heating: { start: 0, step: 1 } }, /heating/],
    ['vibration axis', { vibration: { start: 0, frequency: 1, amplitude: 1, axis: 'z' as 'x' } }, /vibration\[0\]\.axis/],
    ['reportZ without depth', { reportZ: true }, /depthOfField/],
    ['drift velocity', { drift: { start: 0, velocity: [1] as unknown as [number, number] } }, /drift\[0\]\.velocity/],
  ];
  for (const [name, patch, message] of bad) {
    it(`throws a RangeError naming the option for bad ${name}`, () => {
      expect(() => resolveSimulationOptions({ seed: 1, frames: 10, ...patch })).toThrow(RangeError);
      expect(() => resolveSimulationOptions({ seed: 1, frames: 10, ...patch })).toThrow(message);
    });
  }

  it('carries the code JOSTLE_E_SIMULATION_OPTION', () => {
    try {
      resolveSimulationOptions({ seed: 1, frames: -1 });
      expect.unreachable();
    } catch (error) {
      expect((error as { code?: string }).code).toBe('JOSTLE_E_SIMULATION_OPTION');
    }
  });
});
