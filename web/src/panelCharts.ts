import uPlot from 'uplot';
import { withAlpha, type ChartTheme } from './palette.js';
import { fmt } from './formatNumber.js';
import { tagPlugin, type TagMark } from './tagMarks.js';

/** What the time charts need to draw tags. */
export interface TagSource {
  marks: () => TagMark[];
  now: () => number | null;
}

const FONT = '14px system-ui, sans-serif';
const LABEL_FONT = 'bold 15px system-ui, sans-serif';

function axis(th: ChartTheme, label: string, extra: Partial<uPlot.Axis> = {}): uPlot.Axis {
  return { label, stroke: th.ink, font: FONT, labelFont: LABEL_FONT, grid: { stroke: th.grid, width: 1 }, ticks: { stroke: th.grid, width: 1 }, ...extra };
}

const hidden = (label: string): uPlot.Series => ({ label, stroke: 'transparent', width: 0, points: { show: false } });

function line(label: string, stroke: string, width = 2.5, dash?: number[], unit = ''): uPlot.Series {
  // dots only while the series is sparse, so a lone point is still seen
  return { label, stroke, width, dash, points: { show: (_u, _s, i0, i1) => i1 - i0 < 40, size: 7, fill: stroke }, spanGaps: false, value: (_u, v) => (v === null || v === undefined ? '–' : `${fmt(v)}${unit}`) };
}

function base(el: HTMLElement, th: ChartTheme, opts: Partial<uPlot.Options>): uPlot {
  const width = Math.max(280, el.clientWidth || 480);
  const u = new uPlot({ width, height: 270, legend: { show: true, live: false }, cursor: { drag: { x: false, y: false } }, ...opts } as uPlot.Options, [[]], el);
  // band edges are series too; keep them out of the legend
  const hiddenLabels = new Set((opts.series ?? []).filter((s) => s.stroke === 'transparent').map((s) => s.label));
  for (const row of Array.from(u.root.querySelectorAll<HTMLElement>('.u-legend .u-series'))) {
    if (hiddenLabels.has(row.querySelector('.u-label')?.textContent ?? '')) row.style.display = 'none';
  }
  new ResizeObserver(() => {
    const w = Math.max(280, el.clientWidth);
    if (Math.abs(w - u.width) > 2) u.setSize({ width: w, height: 270 });
  }).observe(el);
  return u;
}

/**
 * MSD against lag, log–log: measured MSD with its ± 1 SE band, the fitted model line and the
 * Stokes-Einstein expectation band (columns of `msdColumns`).
 *
 * @example
 * const u = msdChart(el, chartTheme('dusk')); u.setData(msdColumns(report));
 */
export function msdChart(el: HTMLElement, th: ChartTheme): uPlot {
  return base(el, th, {
    scales: { x: { time: false, distr: 3 }, y: { distr: 3 } },
    axes: [axis(th, 'lag τ (s)'), axis(th, 'MSD (µm²)', { size: 70 })],
    series: [
      { label: 'lag (s)', value: (_u, v) => (v == null ? '–' : fmt(v)) },
      { ...line('MSD ± 1 SE', th.measured, 0, undefined, ' µm²'), points: { show: true, size: 9, fill: th.measured, stroke: th.measured } },
      hidden('MSD − SE'),
      hidden('MSD + SE'),
      line('model fit', th.model, 2.5, undefined, ' µm²'),
      line('Stokes-Einstein', th.expected, 2, [8, 5], ' µm²'),
      hidden('SE low'),
      hidden('SE high'),
    ],
    bands: [
      { series: [3, 2], fill: withAlpha(th.measured, 0.3) },
      { series: [7, 6], fill: withAlpha(th.expected, 0.18) },
    ],
  });
}

/**
 * A time chart (x = data time, s) with an estimate, its CI band and a reference with its band:
 * columns `[t, value, low, high, ref, refLow, refHigh]`; tags drawn on the time axis.
 *
 * @example
 * const u = bandTimeChart(el, th, 'D (µm²/s)', 'D (95 % CI)', 'Stokes-Einstein ± 1.96 sd', tags);
 */
export function bandTimeChart(el: HTMLElement, th: ChartTheme, yLabel: string, valueLabel: string, refLabel: string, tags: TagSource, unit: string): uPlot {
  return base(el, th, {
    scales: { x: { time: false } },
    axes: [axis(th, 'time (s)'), axis(th, yLabel, { size: 70 })],
    series: [
      { label: 'time (s)', value: (_u, v) => (v == null ? '–' : fmt(v)) },
      line(valueLabel, th.measured, 2.5, undefined, unit),
      hidden('low'),
      hidden('high'),
      line(refLabel, th.expected, 2, [8, 5], unit),
      hidden('ref low'),
      hidden('ref high'),
    ],
    bands: [
      { series: [3, 2], fill: withAlpha(th.measured, 0.28) },
      { series: [6, 5], fill: withAlpha(th.expected, 0.15) },
    ],
    plugins: [tagPlugin(tags.marks, tags.now, th.tag)],
  });
}

/**
 * Temperature over time: reported (°C, dashed) against implied with its 95 % CI band:
 * columns `[t, reported, implied, low, high]`; tags on the time axis.
 *
 * @example
 * temperatureChart(el, th, tags).setData(temperatureColumns(state));
 */
export function temperatureChart(el: HTMLElement, th: ChartTheme, tags: TagSource): uPlot {
  return base(el, th, {
    scales: { x: { time: false } },
    axes: [axis(th, 'time (s)'), axis(th, 'temperature (°C)', { size: 70 })],
    series: [
      { label: 'time (s)', value: (_u, v) => (v == null ? '–' : fmt(v)) },
      line('reported', th.expected, 2.5, [8, 5], ' °C'),
      line('implied (95 % CI)', th.measured, 2.5, undefined, ' °C'),
      hidden('low'),
      hidden('high'),
    ],
    bands: [{ series: [4, 3], fill: withAlpha(th.measured, 0.28) }],
    plugins: [tagPlugin(tags.marks, tags.now, th.tag)],
  });
}

/**
 * Drift velocity over time: `[t, vx, vy]` µm/s (vx solid, vy dashed); tags on the time axis.
 *
 * @example
 * driftVelocityChart(el, th, tags).setData(driftVelocityColumns(state));
 */
export function driftVelocityChart(el: HTMLElement, th: ChartTheme, tags: TagSource): uPlot {
  return base(el, th, {
    scales: { x: { time: false } },
    axes: [axis(th, 'time (s)'), axis(th, 'drift velocity (µm/s)', { size: 70 })],
    series: [
      { label: 'time (s)', value: (_u, v) => (v == null ? '–' : fmt(v)) },
      line('vx', th.measured, 2.5, undefined, ' µm/s'),
      line('vy', th.second, 2.5, [4, 3], ' µm/s'),
    ],
    plugins: [tagPlugin(tags.marks, tags.now, th.tag)],
  });
}

/**
 * Common-mode spectrum: statistic against frequency (Hz) with the detection threshold as a
 * dashed line; `peaks()` are marked with a triangle and their frequency.
 *
 * @example
 * spectrumChart(el, th, () => peaks).setData(spectrumColumns(state).columns);
 */
export function spectrumChart(el: HTMLElement, th: ChartTheme, peaks: () => { frequency: number; axis: string }[]): uPlot {
  const marker: uPlot.Plugin = {
    hooks: {
      draw: (u) => {
        const ctx = u.ctx;
        const dpr = devicePixelRatio || 1;
        ctx.save();
        ctx.fillStyle = th.limit;
        ctx.strokeStyle = th.limit;
        ctx.font = `bold ${Math.round(13 * dpr)}px system-ui, sans-serif`;
        for (const p of peaks()) {
          const x = u.valToPos(p.frequency, 'x', true);
          if (!(x >= u.bbox.left && x <= u.bbox.left + u.bbox.width)) continue;
          const y = u.bbox.top + 4 * dpr;
          const s = 8 * dpr;
          ctx.beginPath();
          ctx.moveTo(x - s, y);
          ctx.lineTo(x + s, y);
          ctx.lineTo(x, y + 1.6 * s);
          ctx.closePath();
          ctx.fill();
          ctx.lineWidth = dpr;
          ctx.setLineDash([2 * dpr, 3 * dpr]);
          ctx.beginPath();
          ctx.moveTo(x, y + 1.6 * s);
          ctx.lineTo(x, u.bbox.top + u.bbox.height);
          ctx.stroke();
          ctx.setLineDash([]);
          ctx.fillText(`${fmt(p.frequency)} Hz (${p.axis})`, x + s + 2 * dpr, y + s);
        }
        ctx.restore();
      },
    },
  };
  return base(el, th, {
    scales: { x: { time: false }, y: { distr: 3 } },
    axes: [axis(th, 'frequency (Hz)'), axis(th, 'statistic (1, log)', { size: 70 })],
    series: [
      { label: 'frequency (Hz)', value: (_u, v) => (v == null ? '–' : fmt(v)) },
      line('statistic', th.measured, 2),
      line('threshold', th.limit, 2, [10, 6]),
    ],
    plugins: [marker],
  });
}
