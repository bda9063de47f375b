/** The typed arrays the per-track stores grow. */
export type GrowableArray = Float64Array | Int32Array | Uint32Array | Uint8Array;

/**
 * A copy of `old` in a new array of the same type and `size` elements (≥ old.length), the new
 * tail filled with `fill` (default 0). For stores that grow by doubling. O(size).
 *
 * @example
 * grownArray(Float64Array.of(1, 2), 4, -1); // → Float64Array [1, 2, -1, -1]
 */
export function grownArray<A extends GrowableArray>(old: A, size: number, fill = 0): A {
  if (!(size >= old.length) || !Number.isInteger(size)) throw new RangeError('grownArray requires an integer size >= the old length');
  const next = new (old.constructor as new (length: number) => A)(size);
  next.set(old as ArrayLike<number> as never);
  if (fill !== 0) next.fill(fill, old.length);
  return next;
}
