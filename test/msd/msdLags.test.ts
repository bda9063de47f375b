import { describe, expect, it } from 'vitest';
import { msdLags } from '../../src/msd/msdLags.js';

describe('msdLags(count, maxLag, consecutive)', () => {
  it('starts with the consecutive lags and ends at maxLag', () => {
    const lags = msdLags(16, 128, 8);
    expect(Array.from(lags.slice(0, 8))).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
    expect(lags[lags.length - 1]).toBe(128);
    expect(lags.length).toBe(16);
  });
  it('is strictly increasing even when rounding collides', () => {
    const lags = msdLags(30, 40, 4);
    for (let i = 1; i < lags.length; i++) expect(lags[i]).toBeGreaterThan(lags[i - 1]);
    expect(lags[lags.length - 1]).toBe(40);
  });
  it('never exceeds maxLag lags when maxLag is small', () => {
    expect(Array.from(msdLags(16, 5, 8))).toEqual([1, 2, 3, 4, 5]);
  });
  it('rejects a count below 1', () => {
    expect(() => msdLags(0, 10, 2)).toThrow(RangeError);
  });
});
