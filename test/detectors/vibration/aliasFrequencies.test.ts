import { describe, expect, it } from 'vitest';
import { aliasedFrequency, aliasFrequencies } from '../../../src/detectors/vibration/aliasFrequencies.js';

describe('aliasedFrequency', () => {
  it('aliasedFrequency(130, 100) is 30 Hz', () => {
    // detectors.md §2 aliasing: 130 Hz at 100 fps peaked at 30.08 Hz [V]; f_a = |f_v − f_s·round(f_v/f_s)|
    expect(aliasedFrequency(130, 100)).toBeCloseTo(30, 12);
  });
  it('aliasedFrequency folds into [0, f_s/2]', () => {
    // Shannon 1949 (Proc. IRE 37:10): samples at f_s cannot tell f from k·f_s ± f
    expect(aliasedFrequency(60, 30)).toBeCloseTo(0, 12);
    expect(aliasedFrequency(59.94, 29.97)).toBeCloseTo(0, 9);
    expect(aliasedFrequency(77, 100)).toBeCloseTo(23, 12);
    expect(aliasedFrequency(13.7, 100)).toBeCloseTo(13.7, 12);
  });
});

describe('aliasFrequencies', () => {
  it('aliasFrequencies(30, 100, 250) lists k·f_s ± f_a ascending', () => {
    // detectors.md §2: report f_a plus the candidate true frequencies {k f_s ± f_a}
    expect(aliasFrequencies(30, 100, 250)).toEqual([70, 130, 170, 230]);
  });
  it('aliasFrequencies lists each frequency once at f_a = f_s/2', () => {
    // k·f_s + f_s/2 = (k+1)·f_s − f_s/2: the candidates coincide (sampling theorem, common practice, no source)
    expect(aliasFrequencies(50, 100, 300)).toEqual([150, 250]);
  });
  it('every candidate aliases back to the observed frequency', () => {
    // Shannon 1949: every candidate gives the same samples
    for (const f of aliasFrequencies(13.7, 100, 500)) expect(aliasedFrequency(f, 100)).toBeCloseTo(13.7, 9);
  });
  it('aliasFrequencies rejects an observed frequency above Nyquist', () => {
    expect(() => aliasFrequencies(60, 100, 500)).toThrow(RangeError);
  });
});
