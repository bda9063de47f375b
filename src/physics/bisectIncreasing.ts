/**
 * Solves `fn(x) = target` for an increasing function on [low, high] by bisection (internal
 * helper). The caller has checked that fn(low) ≤ target ≤ fn(high). Stops when the bracket is
 * narrower than `tolerance` or after 200 halvings; returns the bracket midpoint.
 *
 * Complexity: O(log₂((high − low)/tolerance)) calls of `fn`.
 *
 * @param fn an increasing function
 * @param target the value to reach
 * @param low lower end of the bracket
 * @param high upper end of the bracket
 * @param tolerance bracket width at which to stop (same unit as x)
 * @returns x with fn(x) ≈ target
 * @example
 * bisectIncreasing((x) => x * x, 2, 0, 2, 1e-12) // → 1.41421356237…
 */
export function bisectIncreasing(
  fn: (x: number) => number,
  target: number,
  low: number,
  high: number,
  tolerance: number,
): number {
  let lo = low;
  let hi = high;
  for (let i = 0; i < 200 && hi - lo > tolerance; i++) {
    const mid = 0.5 * (lo + hi);
    if (fn(mid) < target) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}
