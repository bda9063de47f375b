import type { ChartTheme } from './palette.js';
import { fmt } from './formatNumber.js';

/** Maps plane coordinates (µm) to canvas pixels. */
export type Project = (x: number, y: number) => [number, number];

/** A square-unit x–y canvas with axes, used for the drift path and the field map. */
export interface PlanePlot {
  canvas: HTMLCanvasElement;
  /**
   * Redraws: axes fitted to `bounds` (µm, equal scale on both axes), then `paint` with a
   * projection. Returns the number of marks `paint` reports drawing.
   */
  draw(th: ChartTheme, bounds: { x0: number; x1: number; y0: number; y1: number }, paint: (ctx: CanvasRenderingContext2D, project: Project, dpr: number) => number): number;
  /** Marks drawn by the last `draw` (read by the tests). */
  drawn: number;
}

function ticks(a: number, b: number, n: number): number[] {
  const span = b - a;
  if (!(span > 0)) return [a];
  const raw = span / n;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((k) => k * mag).find((s) => s >= raw) ?? raw;
  const out: number[] = [];
  for (let v = Math.ceil(a / step) * step; v <= b + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  return out;
}

/**
 * Creates a plane plot in `el` (full width, `heightPx` tall) with axis labels (units in them).
 * y grows upwards, as on a stage. O(marks) per draw.
 *
 * @example
 * const p = planePlot(el, 'x (µm)', 'y (µm)', 300);
 * p.draw(th, { x0: 0, x1: 10, y0: 0, y1: 10 }, (ctx, at) => { const [px, py] = at(5, 5); ctx.fillRect(px, py, 4, 4); return 1; });
 */
export function planePlot(el: HTMLElement, xLabel: string, yLabel: string, heightPx = 300): PlanePlot {
  const canvas = document.createElement('canvas');
  canvas.style.width = '100%';
  canvas.style.height = `${heightPx}px`;
  el.appendChild(canvas);
  const plot: PlanePlot = {
    canvas,
    drawn: 0,
    draw(th, b, paint) {
      const dpr = devicePixelRatio || 1;
      const w = Math.max(200, el.clientWidth) * dpr;
      const h = heightPx * dpr;
      if (canvas.width !== w) canvas.width = w;
      if (canvas.height !== h) canvas.height = h;
      const ctx = canvas.getContext('2d')!;
      ctx.clearRect(0, 0, w, h);
      const pad = { l: 70 * dpr, r: 14 * dpr, t: 10 * dpr, b: 48 * dpr };
      const pw = w - pad.l - pad.r;
      const ph = h - pad.t - pad.b;
      let { x0, x1, y0, y1 } = b;
      if (!(x1 > x0)) [x0, x1] = [x0 - 1, x0 + 1];
      if (!(y1 > y0)) [y0, y1] = [y0 - 1, y0 + 1];
      const scale = Math.min(pw / (x1 - x0), ph / (y1 - y0));
      const cx = (x0 + x1) / 2;
      const cy = (y0 + y1) / 2;
      const project: Project = (x, y) => [pad.l + pw / 2 + (x - cx) * scale, pad.t + ph / 2 - (y - cy) * scale];
      const vx0 = cx - pw / 2 / scale;
      const vx1 = cx + pw / 2 / scale;
      const vy0 = cy - ph / 2 / scale;
      const vy1 = cy + ph / 2 / scale;
      ctx.font = `${14 * dpr}px system-ui, sans-serif`;
      ctx.strokeStyle = th.grid;
      ctx.fillStyle = th.ink;
      ctx.lineWidth = dpr;
      ctx.textAlign = 'center';
      for (const v of ticks(vx0, vx1, 6)) {
        const [px] = project(v, 0);
        ctx.beginPath();
        ctx.moveTo(px, pad.t);
        ctx.lineTo(px, pad.t + ph);
        ctx.stroke();
        ctx.fillText(fmt(v), px, pad.t + ph + 18 * dpr);
      }
      ctx.textAlign = 'right';
      for (const v of ticks(vy0, vy1, 5)) {
        const [, py] = project(0, v);
        ctx.beginPath();
        ctx.moveTo(pad.l, py);
        ctx.lineTo(pad.l + pw, py);
        ctx.stroke();
        ctx.fillText(fmt(v), pad.l - 6 * dpr, py + 5 * dpr);
      }
      ctx.font = `bold ${15 * dpr}px system-ui, sans-serif`;
      ctx.textAlign = 'center';
      ctx.fillText(xLabel, pad.l + pw / 2, h - 8 * dpr);
      ctx.save();
      ctx.translate(16 * dpr, pad.t + ph / 2);
      ctx.rotate(-Math.PI / 2);
      ctx.fillText(yLabel, 0, 0);
      ctx.restore();
      ctx.save();
      ctx.beginPath();
      ctx.rect(pad.l, pad.t, pw, ph);
      ctx.clip();
      plot.drawn = paint(ctx, project, dpr);
      ctx.restore();
      canvas.dataset.drawn = String(plot.drawn);
      return plot.drawn;
    },
  };
  return plot;
}
