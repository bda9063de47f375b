import { describe, expect, it } from 'vitest';
import { grownArray } from '../../src/stats/grownArray.js';

describe('grownArray', () => {
  it('grownArray(old, size, fill) keeps the type and the values and fills the new tail', () => {
    const f = grownArray(Float64Array.of(1.5, -2), 4, -1);
    expect(f).toBeInstanceOf(Float64Array);
    expect(Array.from(f)).toEqual([1.5, -2, -1, -1]);
    const i = grownArray(Int32Array.of(7), 3);
    expect(i).toBeInstanceOf(Int32Array);
    expect(Array.from(i)).toEqual([7, 0, 0]);
    expect(Array.from(grownArray(new Uint8Array(0), 2, 1))).toEqual([1, 1]);
  });

  it('grownArray rejects a size below the old length', () => {
    expect(() => grownArray(new Uint32Array(4), 3)).toThrow(RangeError);
    expect(() => grownArray(new Uint32Array(4), 4.5)).toThrow(RangeError);
  });
});
