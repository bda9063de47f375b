/**
 * Wait before reconnect attempt `attempt` (0-based), ms: exponential backoff doubling from
 * `baseMs`, capped at `maxMs`, with a deterministic jitter fraction `jitter01` ∈ [0, 1) that
 * spreads the wait over [½·d, d] so many pages do not knock on a restarted server together.
 *
 * Complexity O(1).
 *
 * @example
 * backoffDelay(0, 0.5) // → 375 (base 500 ms, halfway between 250 and 500)
 * backoffDelay(10, 0)  // → 4000 (half of the 8000 ms cap)
 */
export function backoffDelay(attempt: number, jitter01: number, baseMs = 500, maxMs = 8000): number {
  if (!(baseMs > 0) || !(maxMs >= baseMs)) throw new RangeError('backoffDelay: need 0 < baseMs ≤ maxMs');
  const n = Math.max(0, Math.floor(Number.isFinite(attempt) ? attempt : 0));
  const full = Math.min(maxMs, baseMs * 2 ** Math.min(n, 30));
  const j = Math.min(Math.max(Number.isFinite(jitter01) ? jitter01 : 0, 0), 0.999999);
  return full * (0.5 + 0.5 * j);
}
