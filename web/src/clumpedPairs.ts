import type { Report } from '../../src/report.js';

/**
 * Pairs of track ids the clumping detector flagged, from `report.detectors.clumping`
 * (`pairs`, `persistentPairs`, `merges`) and from the detail of open clumping alerts; each pair
 * once, smaller id first. Accepts `{ a, b }` objects and `[a, b]` arrays. O(pairs).
 *
 * @example
 * clumpedPairs(report) // → [[4, 528], [11, 32]]
 */
export function clumpedPairs(report: Report): [number, number][] {
  const seen = new Set<string>();
  const out: [number, number][] = [];
  const take = (list: unknown) => {
    if (!Array.isArray(list)) return;
    for (const item of list) {
      let a: unknown;
      let b: unknown;
      if (Array.isArray(item)) [a, b] = item;
      else if (item && typeof item === 'object') ({ a, b } = item as { a?: unknown; b?: unknown });
      if (typeof a !== 'number' || typeof b !== 'number' || a === b) continue;
      const pair: [number, number] = a < b ? [a, b] : [b, a];
      const key = pair.join(':');
      if (!seen.has(key)) {
        seen.add(key);
        out.push(pair);
      }
    }
  };
  const c = (report.detectors as { clumping?: Record<string, unknown> } | undefined)?.clumping;
  if (c) {
    take(c.pairs);
    take(c.persistentPairs);
    take(c.merges);
  }
  for (const alert of report.alerts ?? []) {
    if (alert.kind !== 'clumping' || alert.end !== null) continue;
    take(alert.detail?.pairs);
    take(alert.detail?.merges);
  }
  return out;
}
