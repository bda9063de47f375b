import type uPlot from 'uplot';
import type { AlertMessage, RunState, ServerToDashboardMessage } from '../../server/protocol.js';
import type { Alert } from '../../src/report.js';
import { renderAlertStrip } from './alertStrip.js';
import { clumpedPairs, dimerFractionText } from './clumpedPairs.js';
import { frameScheduler } from './frameScheduler.js';
import { liveSocket, type LinkState, type LiveSocket } from './liveSocket.js';
import { msdColumns } from './msdColumns.js';
import { chartTheme, OKABE_ITO, withAlpha, type ThemeName } from './palette.js';
import { fmt } from './formatNumber.js';
import { bandTimeChart, driftVelocityChart, msdChart, spectrumChart, temperatureChart, type TagSource } from './panelCharts.js';
import { planePlot, type PlanePlot } from './planePlot.js';
import { diffusionColumns, driftPathPoints, driftVelocityColumns, spectrumColumns, temperatureColumns } from './runColumns.js';
import { SHORTCUTS, shortcutFor } from './shortcutKeys.js';
import { tagMarksOf, type TagMark } from './tagMarks.js';

/** What the page exposes on `window.__jostle` for the end-to-end tests. */
export interface RunViewProbe {
  charts: Record<string, uPlot>;
  planes: Record<string, PlanePlot>;
  state: () => RunState | null;
  renders: number;
  /** Snapshots received (one per (re)connect). */
  snapshots: number;
}

const PANELS = [
  ['msd', 'Spread with lag', 'MSD against lag, log–log: measured ± 1 SE, estimator model, Stokes-Einstein expectation (95 %)'],
  ['diffusion', 'D through the run', 'diffusion coefficient with its 95 % CI against the Stokes-Einstein value at the reported temperature'],
  ['temperature', 'Thermometer check', 'reported temperature against the temperature the motion implies (95 % CI)'],
  ['spectrum', 'Shake spectrum', 'common-mode periodogram statistic with its detection threshold; peaks marked ▼'],
  ['driftPath', 'Stage wander', 'drift path: where the common-mode motion has carried the field (µm), start ○, now ●'],
  ['driftVelocity', 'Wander speed', 'drift velocity per axis (µm/s); current value with 95 % CI below'],
  ['field', 'Field map', 'latest positions with short trails; clumped pairs joined and ringed'],
  ['tallies', 'Tallies', 'live counters of this run'],
] as const;

type PanelId = (typeof PANELS)[number][0];

const make = <K extends keyof HTMLElementTagNameMap>(tag: K, cls = '', text?: string): HTMLElementTagNameMap[K] => {
  const e = document.createElement(tag);
  if (cls) e.className = cls;
  if (text !== undefined) e.textContent = text;
  return e;
};

const ci = (e: { value: number; ci95: [number, number] } | null | undefined, unit: string, scale = 1): string =>
  e ? `${fmt(e.value * scale)} ${unit} [95 % CI ${fmt(e.ci95[0] * scale)}–${fmt(e.ci95[1] * scale)}]` : '–';

/**
 * The live run view ("Watch desk") for run `runId`: alert strip, headline estimates, the eight
 * panels, and the notebook for tags. State arrives over the socket into a store; a render is
 * requested per message and runs at most once per animation frame. Returns a closer.
 *
 * @example
 * const close = showRunView(main, token, 'bench-a.0412', { theme: () => 'dusk', toggleTheme, goRuns, onLink });
 */
export function showRunView(
  host: HTMLElement,
  token: string,
  runId: string,
  ui: { theme: () => ThemeName; toggleTheme: () => void; goRuns: () => void; onLink: (s: LinkState, retryInMs: number | null) => void },
): () => void {
  let state: RunState | null = null;
  const alerts = new Map<string, Alert>();
  const acked = new Set<string>();
  const sentTags: TagMark[] = [];
  let openSegment: TagMark | null = null;
  let coalescedSeen = 0;

  host.replaceChildren();
  const view = make('div', 'watch-desk');
  const title = make('h2', 'run-title', `Run ${runId}`);
  const strip = make('section', 'strip');
  strip.id = 'strip';
  strip.setAttribute('aria-live', 'assertive');
  const headline = make('section', 'headline');
  const grid = make('div', 'panels');
  const bodies = {} as Record<PanelId, HTMLElement>;
  const notes = {} as Record<PanelId, HTMLElement>;
  for (const [id, name, caption] of PANELS) {
    const panel = make('section', `panel panel-${id}`);
    panel.dataset.panel = id;
    const head = make('header');
    head.append(make('h3', '', name), make('p', 'caption', caption));
    const body = make('div', 'panel-body');
    const note = make('p', 'panel-note');
    panel.append(head, body, note);
    grid.append(panel);
    bodies[id] = body;
    notes[id] = note;
  }

  // Notebook (tagging dock)
  const dock = make('aside', 'notebook');
  dock.innerHTML = `<h3>Notebook</h3>`;
  const label = make('input', 'tag-label');
  label.id = 'tag-label';
  label.placeholder = 'label (e.g. rinse, refocus)';
  label.value = 'segment';
  const note = make('input', 'tag-note');
  note.id = 'tag-note';
  note.placeholder = 'note (optional)';
  const bOpen = make('button', 'tag-open', '⟦ Open segment  [');
  const bClose = make('button', 'tag-close', 'Close segment ⟧  ]');
  const bMark = make('button', 'tag-mark', '◆ Point mark  .');
  const tagStatus = make('p', 'tag-status', 'No segment open.');
  const keys = make('dl', 'key-card');
  for (const s of SHORTCUTS) keys.append(make('dt', '', s.key), make('dd', '', s.text));
  const keyToggle = make('button', 'key-toggle', 'Keys ?');
  const back = make('button', 'go-runs', '← Bench log (g)');
  const themeButton = make('button', 'theme-toggle', 'Theme (d)');
  dock.append(label, note, bOpen, bClose, bMark, tagStatus, keyToggle, keys, themeButton, back);
  keys.hidden = true;

  view.append(title, strip, headline, grid, dock);
  host.append(view);

  const now = (): number | null => state?.positions.t ?? (typeof state?.report.input.end === 'number' ? (state.report.input.end as number) : null);
  const marks = (): TagMark[] => {
    const fromReport = state ? tagMarksOf(state.report) : [];
    const pending = sentTags.filter((m) => !fromReport.some((r) => r.label === m.label && Math.abs(r.start - m.start) < 1e-9));
    return [...fromReport, ...pending, ...(openSegment ? [openSegment] : [])];
  };
  const tags: TagSource = { marks, now };

  // charts, rebuilt on theme change
  let charts = {} as Record<string, uPlot>;
  let planes = {} as Record<string, PlanePlot>;
  const build = () => {
    for (const u of Object.values(charts)) u.destroy();
    for (const id of ['msd', 'diffusion', 'temperature', 'spectrum', 'driftPath', 'driftVelocity', 'field'] as const) bodies[id].replaceChildren();
    const th = chartTheme(ui.theme());
    charts = {
      msd: msdChart(bodies.msd, th),
      diffusion: bandTimeChart(bodies.diffusion, th, 'D (µm²/s)', 'D (95 % CI)', 'Stokes-Einstein ± 1.96 sd', tags, ' µm²/s'),
      temperature: temperatureChart(bodies.temperature, th, tags),
      spectrum: spectrumChart(bodies.spectrum, th, () => (state ? spectrumColumns(state).peaks : [])),
      driftVelocity: driftVelocityChart(bodies.driftVelocity, th, tags),
    };
    planes = {
      driftPath: planePlot(bodies.driftPath, 'drift x (µm)', 'drift y (µm)', 270),
      field: planePlot(bodies.field, 'x (µm)', 'y (µm)', 340),
    };
    probe.charts = charts;
    probe.planes = planes;
  };
  const probe: RunViewProbe = { charts, planes, state: () => state, renders: 0, snapshots: 0 };
  (window as unknown as { __jostle: RunViewProbe }).__jostle = probe;
  build();

  const render = () => {
    probe.renders++;
    const allAlerts = [...alerts.values()].sort((a, b) => a.start - b.start);
    renderAlertStrip(strip, allAlerts, ack, acked);
    if (!state) return;
    const s = state;
    const r = s.report;
    const th = chartTheme(ui.theme());
    title.textContent = `Run ${s.run}${s.label ? ` — ${s.label}` : ''} · ${s.state === 'live' ? '◉ live' : '■ ended'} · t = ${fmt(now() ?? 0)} s`;
    charts.msd.setData(msdColumns(r) as uPlot.AlignedData);
    charts.diffusion.setData(diffusionColumns(s) as uPlot.AlignedData);
    charts.temperature.setData(temperatureColumns(s) as uPlot.AlignedData);
    const spectrum = spectrumColumns(s);
    charts.spectrum.setData(spectrum.columns as uPlot.AlignedData);
    charts.driftVelocity.setData(driftVelocityColumns(s) as uPlot.AlignedData);

    // headline estimates
    const est = r.diffusion.estimator;
    const expected = (r.temperature as { expectedDiffusion?: { value: number; sd: number } | null }).expectedDiffusion;
    const items: [string, string][] = [
      ['D', ci(r.diffusion.coefficient, 'µm²/s')],
      ['expected D (Stokes-Einstein)', expected ? `${fmt(expected.value)} ± ${fmt(expected.sd)} µm²/s (sd)` : '– (no radius or temperature)'],
      ['estimator', est ? `${est.name}` : '–'],
      ['localization error σ', ci(r.diffusion.localizationError, 'nm', 1000)],
      ['MSD exponent α', ci(r.diffusion.exponent, '')],
      ['temperature', `reported ${r.temperature.reported === null ? '–' : `${fmt(r.temperature.reported)} °C`} · implied ${ci(r.temperature.implied, '°C')}`],
    ];
    headline.replaceChildren(...items.map(([k, v]) => {
      const d = make('div', 'figure');
      d.append(make('span', 'figure-name', k), make('span', 'figure-value', v));
      return d;
    }));
    notes.msd.textContent = est ? `estimator ${est.name}: ${est.reason}` : 'no estimate yet';
    notes.diffusion.textContent = r.rolling && typeof r.rolling === 'object' ? `rolling window ${fmt((r.rolling as { windowSeconds: number }).windowSeconds)} s` : '';
    const dv = r.drift.velocity;
    notes.driftVelocity.textContent = dv
      ? `vx ${fmt(dv.value[0])} µm/s [${fmt(dv.ci95[0][0])}–${fmt(dv.ci95[0][1])}], vy ${fmt(dv.value[1])} µm/s [${fmt(dv.ci95[1][0])}–${fmt(dv.ci95[1][1])}] (95 % CI, run so far)`
      : 'no drift estimate yet';
    notes.spectrum.textContent = spectrum.columns[0].length === 0
      ? 'no spectrum yet (the first window needs 8 segments of 256 frames)'
      : `threshold ${spectrum.threshold === null ? '–' : fmt(spectrum.threshold)}; ${spectrum.peaks.length === 0 ? 'no peak above it' : spectrum.peaks.map((p) => `peak ${fmt(p.frequency)} Hz along ${p.axis}, ${fmt(p.amplitude * 1000)} nm`).join('; ')}`;

    // drift path
    const path = driftPathPoints(s);
    const b = bounds(path.x, path.y, 0.05);
    planes.driftPath.draw(th, b, (ctx, at, dpr) => {
      if (path.x.length === 0) return 0;
      ctx.strokeStyle = th.measured;
      ctx.lineWidth = 2.5 * dpr;
      ctx.beginPath();
      for (let i = 0; i < path.x.length; i++) {
        const [px, py] = at(path.x[i], path.y[i]);
        if (i === 0) ctx.moveTo(px, py);
        else ctx.lineTo(px, py);
      }
      ctx.stroke();
      const [sx, sy] = at(path.x[0], path.y[0]);
      const [ex, ey] = at(path.x[path.x.length - 1], path.y[path.y.length - 1]);
      ctx.lineWidth = 2 * dpr;
      ctx.strokeStyle = th.ink;
      ctx.beginPath();
      ctx.arc(sx, sy, 6 * dpr, 0, 2 * Math.PI);
      ctx.stroke();
      ctx.fillStyle = OKABE_ITO.orange;
      ctx.beginPath();
      ctx.arc(ex, ey, 6 * dpr, 0, 2 * Math.PI);
      ctx.fill();
      return path.x.length;
    });
    notes.driftPath.textContent = path.x.length > 0 ? `net ${fmt(Math.hypot(path.x.at(-1)!, path.y.at(-1)!))} µm over ${fmt(path.t.at(-1)! - path.t[0])} s` : 'no drift path yet';

    // field map
    const frames = s.positions.frames;
    const latest = frames[0];
    const pairs = clumpedPairs(r);
    const fx: number[] = [];
    const fy: number[] = [];
    for (const f of frames) {
      fx.push(...f.x);
      fy.push(...f.y);
    }
    planes.field.draw(th, bounds(fx, fy, 0.02), (ctx, at, dpr) => {
      if (!latest) return 0;
      // trails: per id, newest frame backwards
      const trail = new Map<number, [number, number][]>();
      for (const f of frames) {
        if (!f.id) continue;
        for (let i = 0; i < f.x.length; i++) {
          const list = trail.get(f.id[i]) ?? [];
          list.push(at(f.x[i], f.y[i]));
          trail.set(f.id[i], list);
        }
      }
      ctx.strokeStyle = withAlpha(th.ink, 0.45);
      ctx.lineWidth = 1.5 * dpr;
      for (const pts of trail.values()) {
        if (pts.length < 2) continue;
        ctx.beginPath();
        pts.forEach(([px, py], i) => (i === 0 ? ctx.moveTo(px, py) : ctx.lineTo(px, py)));
        ctx.stroke();
      }
      ctx.fillStyle = th.measured;
      const where = new Map<number, [number, number]>();
      for (let i = 0; i < latest.x.length; i++) {
        const [px, py] = at(latest.x[i], latest.y[i]);
        if (latest.id) where.set(latest.id[i], [px, py]);
        ctx.beginPath();
        ctx.arc(px, py, 3.5 * dpr, 0, 2 * Math.PI);
        ctx.fill();
      }
      let shown = 0;
      ctx.strokeStyle = th.limit;
      ctx.lineWidth = 2.5 * dpr;
      for (const [a, c] of pairs) {
        const pa = where.get(a);
        const pc = where.get(c);
        if (!pa || !pc) continue;
        shown++;
        ctx.beginPath();
        ctx.moveTo(pa[0], pa[1]);
        ctx.lineTo(pc[0], pc[1]);
        ctx.stroke();
        for (const p of [pa, pc]) {
          ctx.beginPath();
          ctx.arc(p[0], p[1], 8 * dpr, 0, 2 * Math.PI);
          ctx.stroke();
        }
      }
      const dimers = dimerFractionText(r);
      notes.field.textContent = `${latest.x.length} particles at t = ${fmt(latest.t)} s, trails of ${frames.length} frames; clumped pairs flagged: ${pairs.length}${pairs.length ? ` (${shown} in view, ringed)` : ''}${dimers ? `; ${dimers}` : ''}`;
      return latest.x.length;
    });

    // tallies
    const c = s.counters;
    const tally: [string, string][] = [
      ['frames/s', fmt(c.framesPerSecond)],
      ['particles', String(c.particles)],
      ['tracks', String(c.tracks)],
      ['frames', String(c.frames)],
      ['rejected messages', String(c.rejectedMessages)],
      ['dropped updates', String(c.droppedUpdates + coalescedSeen)],
      ['recording', c.recording ? '● on' : '✕ stopped (quota)'],
    ];
    bodies.tallies.replaceChildren(...tally.map(([k, v]) => {
      const d = make('div', 'tally');
      d.dataset.tally = k;
      d.append(make('span', 'tally-value', v), make('span', 'tally-name', k));
      return d;
    }));
    const open = openSegment as TagMark | null;
    tagStatus.textContent = open ? `Segment “${open.label}” open since t = ${fmt(open.start)} s — close with ]` : `No segment open. Tags in this run: ${marks().length}.`;
  };
  const schedule = frameScheduler(render);

  const applyAlert = (m: AlertMessage) => {
    const { type: _t, run: _r, change: _c, ...alert } = m;
    alerts.set(alert.id, alert as Alert);
  };
  const onMessage = (raw: unknown) => {
    const m = raw as ServerToDashboardMessage;
    if (m.type === 'snapshot' || m.type === 'update') {
      const { type: _t, ...rest } = m as ServerToDashboardMessage & { coalesced?: number };
      if (m.type === 'update') coalescedSeen += m.coalesced ?? 0;
      else probe.snapshots++;
      state = rest as RunState;
      alerts.clear();
      for (const a of state.report.alerts) alerts.set(a.id, a);
    } else if (m.type === 'alert' && m.run === runId) applyAlert(m);
    schedule();
  };
  const link: LiveSocket = liveSocket({
    url: `${location.protocol === 'https:' ? 'wss' : 'ws'}://${location.host}/watch?run=${encodeURIComponent(runId)}&token=${encodeURIComponent(token)}`,
    onMessage,
    onState: (st, d) => {
      // while the link is down the charts show the last state received, dimmed as stale
      view.classList.toggle('stale', st !== 'open');
      ui.onLink(st, d.retryInMs);
    },
  });

  function ack(id: string) {
    if (link.send({ type: 'ack', alert: id })) acked.add(id);
    schedule();
  }
  const sendTag = (mark: TagMark) => {
    const message = { type: 'tag', label: mark.label, start: mark.start, ...(mark.end !== null ? { end: mark.end } : {}), ...(mark.note ? { note: mark.note } : {}) };
    if (link.send(message)) sentTags.push({ ...mark, open: false });
    else tagStatus.textContent = 'Link down: tag not sent, try again once linked.';
  };
  const labelText = () => label.value.trim() || 'segment';
  const actions = {
    'segment-open': () => {
      const t = now();
      if (t === null || openSegment) return;
      openSegment = { label: labelText(), start: t, end: null, note: note.value.trim(), open: true };
      schedule();
    },
    'segment-close': () => {
      const t = now();
      if (!openSegment || t === null) return;
      sendTag({ ...openSegment, end: Math.max(t, openSegment.start), note: note.value.trim() || openSegment.note, open: false });
      openSegment = null;
      note.value = '';
      schedule();
    },
    mark: () => {
      const t = now();
      if (t === null) return;
      sendTag({ label: label.value.trim() || 'mark', start: t, end: null, note: note.value.trim() });
      note.value = '';
      schedule();
    },
    note: () => note.focus(),
    label: () => label.select(),
    ack: () => {
      const next = [...alerts.values()].filter((a) => a.end === null && !acked.has(a.id) && a.detail?.acknowledged !== true).sort((a, b) => b.start - a.start)[0];
      if (next) ack(next.id);
    },
    theme: () => {
      ui.toggleTheme();
      build();
      schedule();
    },
    runs: () => ui.goRuns(),
    help: () => {
      keys.hidden = !keys.hidden;
    },
  };
  bOpen.onclick = actions['segment-open'];
  bClose.onclick = actions['segment-close'];
  bMark.onclick = actions.mark;
  keyToggle.onclick = actions.help;
  themeButton.onclick = actions.theme;
  back.onclick = actions.runs;
  const onKey = (e: KeyboardEvent) => {
    const target = e.target as HTMLElement | null;
    const typing = !!target && (target.tagName === 'INPUT' || target.tagName === 'TEXTAREA');
    if (typing && e.key === 'Escape') return target.blur();
    if (typing && e.key === 'Enter') {
      target.blur();
      return;
    }
    const action = shortcutFor(e, typing);
    if (!action) return;
    e.preventDefault();
    actions[action]();
  };
  document.addEventListener('keydown', onKey);
  schedule();
  return () => {
    document.removeEventListener('keydown', onKey);
    link.close();
    for (const u of Object.values(charts)) u.destroy();
  };
}

function bounds(xs: number[], ys: number[], padFraction: number) {
  let x0 = Infinity;
  let x1 = -Infinity;
  let y0 = Infinity;
  let y1 = -Infinity;
  for (let i = 0; i < xs.length; i++) {
    if (xs[i] < x0) x0 = xs[i];
    if (xs[i] > x1) x1 = xs[i];
    if (ys[i] < y0) y0 = ys[i];
    if (ys[i] > y1) y1 = ys[i];
  }
  if (!Number.isFinite(x0)) return { x0: -1, x1: 1, y0: -1, y1: 1 };
  const px = Math.max((x1 - x0) * padFraction, 0.05);
  const py = Math.max((y1 - y0) * padFraction, 0.05);
  return { x0: x0 - px, x1: x1 + px, y0: y0 - py, y1: y1 + py };
}
