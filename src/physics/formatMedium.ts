import type { Medium } from './medium.js';

/**
 * Writes a medium back as its `--medium` option text, the inverse of {@link parseMedium}:
 * `parseMedium(formatMedium(m))` equals `m` for every valid medium (numbers are written with the
 * shortest round-tripping decimal form of `String(number)`).
 *
 * Complexity: O(1).
 *
 * @param medium a medium
 * @returns the option text
 * @example
 * formatMedium({ kind: 'water' })                                    // → 'water'
 * formatMedium({ kind: 'glycerol-water', glycerolMassFraction: 0.5 }) // → 'glycerol-water:0.5'
 * formatMedium({ kind: 'viscosity', milliPascalSeconds: 1.2 })        // → 'viscosity:1.2'
 */
export function formatMedium(medium: Medium): string {
  switch (medium.kind) {
    case 'water':
      return 'water';
    case 'glycerol-water':
      return `glycerol-water:${String(medium.glycerolMassFraction)}`;
    case 'viscosity':
      return `viscosity:${String(medium.milliPascalSeconds)}`;
  }
}
