/**
 * The Okabe–Ito colour-blind-safe palette (Okabe & Ito 2008, "Color Universal Design"):
 * eight colours that stay distinguishable under the common colour-vision deficiencies.
 * Every chart and status colour of the page comes from here; shape, pattern and text always
 * carry the same meaning as the colour, so nothing depends on colour alone.
 *
 * @example
 * OKABE_ITO.vermillion // → '#D55E00'
 */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const;

/** The two page themes. */
export type ThemeName = 'dusk' | 'daylight';

/** Colours one theme gives the charts. */
export interface ChartTheme {
  name: ThemeName;
  /** Axis text, ticks and the main series that would be black on paper. */
  ink: string;
  grid: string;
  background: string;
  /** Measured data (MSD, D, implied temperature, statistic). */
  measured: string;
  /** Fitted model line. */
  model: string;
  /** Expectation (Stokes-Einstein, reported temperature). */
  expected: string;
  /** Second axis component (vy). */
  second: string;
  /** Thresholds and peaks. */
  limit: string;
  /** Tag marks. */
  tag: string;
}

/**
 * Chart colours of a theme: "dusk" (dark, default) and "daylight" (light). On the dark theme
 * Okabe–Ito black becomes a light grey and blue the lighter sky blue, for contrast.
 *
 * @example
 * chartTheme('daylight').measured // → '#0072B2'
 */
export function chartTheme(name: ThemeName): ChartTheme {
  const dark = name === 'dusk';
  return {
    name,
    ink: dark ? '#E8E8E8' : OKABE_ITO.black,
    grid: dark ? 'rgba(232,232,232,0.12)' : 'rgba(0,0,0,0.10)',
    background: dark ? '#15171C' : '#FAFAF7',
    measured: dark ? OKABE_ITO.skyBlue : OKABE_ITO.blue,
    model: OKABE_ITO.orange,
    expected: OKABE_ITO.bluishGreen,
    second: OKABE_ITO.reddishPurple,
    limit: OKABE_ITO.vermillion,
    tag: dark ? OKABE_ITO.yellow : '#8A6D00',
  };
}

/** A colour with opacity `alpha` (0–1), for bands. */
export function withAlpha(hex: string, alpha: number): string {
  const n = parseInt(hex.slice(1), 16);
  return `rgba(${(n >> 16) & 255},${(n >> 8) & 255},${n & 255},${alpha})`;
}
