import { describe, expect, it } from 'vitest';
import { backoffDelay } from '../../web/src/backoffDelay.js';

// Capped exponential backoff with jitter: common practice, no source (the "equal jitter"
// variant, wait in [d/2, d], is from memory).
describe('backoffDelay', () => {
  it('doubles from 500 ms per attempt at full jitter', () => {
    expect([0, 1, 2, 3].map((n) => backoffDelay(n, 0.999999))).toEqual([0, 1, 2, 3].map((n) => expect.closeTo(500 * 2 ** n, 0)));
  });

  it('never exceeds the 8 s cap and never waits less than half of it at the cap', () => {
    for (const n of [4, 5, 10, 1000]) {
      expect(backoffDelay(n, 0.999999)).toBeLessThanOrEqual(8000);
      expect(backoffDelay(n, 0)).toBe(4000);
    }
  });

  it('spreads the wait over [d/2, d] with the jitter fraction', () => {
    expect(backoffDelay(0, 0)).toBe(250);
    expect(backoffDelay(0, 0.5)).toBe(375);
  });

  it('rejects a bad base or cap with RangeError', () => {
    expect(() => backoffDelay(0, 0, 0)).toThrow(RangeError);
    expect(() => backoffDelay(0, 0, 1000, 500)).toThrow(RangeError);
  });
});
