import type uPlot from 'uplot';
import type { Report } from '../../src/report.js';

/** A tag as the charts draw it: a segment [start, end] s, or a point mark (end null). */
export interface TagMark {
  label: string;
  start: number;
  end: number | null;
  note: string;
  /** True for a segment this page opened and has not closed yet (drawn to "now"). */
  open?: boolean;
}

/**
 * Tags of a report (`report.tags`, else its `segments`), oldest first. O(tags).
 *
 * @example
 * tagMarksOf(report) // → [{ label: 'rinse', start: 12, end: 20, note: '' }]
 */
export function tagMarksOf(report: Report): TagMark[] {
  const raw = (Array.isArray(report.tags) ? report.tags : report.segments) as unknown[];
  const out: TagMark[] = [];
  for (const item of raw ?? []) {
    const t = item as { label?: unknown; start?: unknown; end?: unknown; note?: unknown };
    if (typeof t.start !== 'number' || !Number.isFinite(t.start)) continue;
    out.push({
      label: typeof t.label === 'string' ? t.label : '',
      start: t.start,
      end: typeof t.end === 'number' && Number.isFinite(t.end) ? t.end : null,
      note: typeof t.note === 'string' ? t.note : '',
    });
  }
  return out.sort((a, b) => a.start - b.start);
}

/**
 * A uPlot plugin drawing tags on a time axis: a point mark as a dashed vertical line with a
 * diamond and its label, a segment as a hatched span with its label; an open segment runs to
 * `now()`. `marks()` is read at every redraw.
 *
 * @example
 * new uPlot({ ...opts, plugins: [tagPlugin(() => marks, () => 42, '#F0E442')] }, data, el)
 */
export function tagPlugin(marks: () => TagMark[], now: () => number | null, colour: string): uPlot.Plugin {
  return {
    hooks: {
      draw: (u: uPlot) => {
        const ctx = u.ctx;
        const { left, top, width, height } = u.bbox;
        const dpr = devicePixelRatio || 1;
        ctx.save();
        ctx.beginPath();
        ctx.rect(left, top, width, height);
        ctx.clip();
        ctx.font = `${Math.round(12 * dpr)}px system-ui, sans-serif`;
        ctx.fillStyle = colour;
        ctx.strokeStyle = colour;
        for (const m of marks()) {
          const x0 = u.valToPos(m.start, 'x', true);
          const endT = m.end ?? (m.open ? now() : null);
          if (endT !== null && endT !== undefined) {
            const x1 = u.valToPos(endT, 'x', true);
            ctx.globalAlpha = 0.16;
            ctx.fillRect(Math.min(x0, x1), top, Math.max(Math.abs(x1 - x0), 2), height);
            ctx.globalAlpha = 0.5;
            ctx.lineWidth = dpr;
            for (let x = Math.min(x0, x1) - height; x < Math.max(x0, x1); x += 10 * dpr) {
              ctx.beginPath();
              ctx.moveTo(Math.max(x, Math.min(x0, x1)), top + Math.max(0, Math.min(x0, x1) - x));
              ctx.lineTo(Math.min(x + height, Math.max(x0, x1)), top + Math.min(height, Math.max(x0, x1) - x));
              ctx.stroke();
            }
          } else {
            ctx.globalAlpha = 0.9;
            ctx.lineWidth = 2 * dpr;
            ctx.setLineDash([6 * dpr, 4 * dpr]);
            ctx.beginPath();
            ctx.moveTo(x0, top);
            ctx.lineTo(x0, top + height);
            ctx.stroke();
            ctx.setLineDash([]);
            const s = 5 * dpr;
            ctx.beginPath();
            ctx.moveTo(x0, top + 2 * dpr);
            ctx.lineTo(x0 + s, top + 2 * dpr + s);
            ctx.lineTo(x0, top + 2 * dpr + 2 * s);
            ctx.lineTo(x0 - s, top + 2 * dpr + s);
            ctx.closePath();
            ctx.fill();
          }
          ctx.globalAlpha = 1;
          ctx.fillText(`${m.label}${m.open ? ' …' : ''}`, x0 + 7 * dpr, top + 24 * dpr);
        }
        ctx.restore();
      },
    },
  };
}
