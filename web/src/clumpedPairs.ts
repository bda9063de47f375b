import type { Report } from '../../src/report.js';
import { fmt } from './formatNumber.js';

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

/**
 * The clumping detector's two dimer-fraction estimates, for the field map's note: by slow
 * tracks (`dimerFraction`) and by brightness (`intensityDimerFraction`), each with its 95 % CI;
 * '' when neither exists yet (both need the baseline blocks; brightness needs intensities). O(1).
 *
 * @example
 * dimerFractionText(report) // → 'dimer fraction 0.12 [0.05, 0.21] by slow tracks; 0.1 [0.04, 0.18] by brightness (412 tracks)'
 */
export function dimerFractionText(report: Report): string {
  const c = (report.detectors as { clumping?: Record<string, unknown> } | undefined)?.clumping;
  if (!c) return '';
  const estimate = (v: unknown): { value: number; ci95: [number, number]; tracks?: number } | null => {
    if (!v || typeof v !== 'object') return null;
    const e = v as { value?: unknown; ci95?: unknown; tracks?: unknown };
    if (typeof e.value !== 'number' || !Array.isArray(e.ci95) || e.ci95.length !== 2) return null;
    return { value: e.value, ci95: [Number(e.ci95[0]), Number(e.ci95[1])], tracks: typeof e.tracks === 'number' ? e.tracks : undefined };
  };
  const slow = estimate(c.dimerFraction);
  const bright = estimate(c.intensityDimerFraction);
  const parts: string[] = [];
  if (slow) parts.push(`${fmt(slow.value)} [${fmt(slow.ci95[0])}, ${fmt(slow.ci95[1])}] by slow tracks`);
  if (bright) parts.push(`${fmt(bright.value)} [${fmt(bright.ci95[0])}, ${fmt(bright.ci95[1])}] by brightness${bright.tracks !== undefined ? ` (${bright.tracks} tracks)` : ''}`);
  return parts.length === 0 ? '' : `dimer fraction ${parts.join('; ')} (95 % CI)`;
}
