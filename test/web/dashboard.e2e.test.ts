import { tmpdir } from 'node:os';
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanTemp, ensureBuilt, launchChromium, ROOT, startRig, startServe, stopAll, tempDir, waitFor, type ServerChild } from './e2eHarness.js';

// End to end: the real server (`jostle serve`), simulated rigs (`jostle simulate <scenario>
// --url`), the built page in Debian's Chromium. Scenarios are the project's own seeded ones
// (src/simulate/scenarios.ts): `clean` has no fault, `drift` starts a 0.15 µm/s stage creep
// at t = 20 s.

// Screenshots of the healthy and the alerting view: into web/docs (committed, linked from the
// READMEs) when JOSTLE_SCREENSHOTS=1, else into a temp folder so a test run leaves the tree clean.
const DOCS = process.env.JOSTLE_SCREENSHOTS === '1' ? join(ROOT, 'web', 'docs') : join(tmpdir(), 'jostle-web-screenshots');
let data: string;
let server: ServerChild;
let browser: BrowserContext;
let page: Page;

interface Drawn { pixels: number; points: number }

/** Per chart: pixels of the measured-data colour (Okabe–Ito sky blue, dusk theme) and points. */
function drawnCharts(p: Page): Promise<Record<string, Drawn>> {
  return p.evaluate(() => {
    const j = (window as unknown as { __jostle: { charts: Record<string, { bbox: { left: number; top: number; width: number; height: number }; ctx: CanvasRenderingContext2D; data: (number | null)[][] }>; planes: Record<string, { canvas: HTMLCanvasElement; drawn: number }> } }).__jostle;
    const sky = [0x56, 0xb4, 0xe9];
    const count = (d: Uint8ClampedArray) => {
      let n = 0;
      for (let i = 0; i < d.length; i += 4) if (d[i + 3] > 200 && Math.abs(d[i] - sky[0]) + Math.abs(d[i + 1] - sky[1]) + Math.abs(d[i + 2] - sky[2]) < 60) n++;
      return n;
    };
    const out: Record<string, { pixels: number; points: number }> = {};
    for (const [k, u] of Object.entries(j.charts)) {
      const b = u.bbox;
      const measured = k === 'temperature' ? u.data[2] : u.data[1];
      out[k] = { pixels: b.width > 0 ? count(u.ctx.getImageData(b.left, b.top, b.width, b.height).data) : 0, points: measured.filter((v) => v !== null && Number.isFinite(v)).length };
    }
    for (const [k, p] of Object.entries(j.planes)) out[k] = { pixels: count(p.canvas.getContext('2d')!.getImageData(0, 0, p.canvas.width, p.canvas.height).data), points: p.drawn };
    return out;
  });
}

const dataTime = (p: Page) => p.evaluate(() => (window as unknown as { __jostle?: { state: () => { positions: { t: number | null } } | null } }).__jostle?.state()?.positions.t ?? null);

async function openRun(run: string): Promise<void> {
  await waitFor(`run ${run} in /api/runs`, async () => {
    const r = await fetch(`http://127.0.0.1:${server.port}/api/runs`, { headers: { authorization: `Bearer ${server.token}` } });
    return ((await r.json()) as { id: string }[]).some((x) => x.id === run);
  }, 20_000);
  await page.goto(`${server.url}&run=${run}`);
}

beforeAll(async () => {
  await ensureBuilt();
  mkdirSync(DOCS, { recursive: true });
  data = tempDir('jostle-e2e-data-');
  server = await startServe(data);
  browser = await launchChromium();
  await browser.addInitScript(() => localStorage.setItem('jostle.theme', 'dusk'));
  page = browser.pages()[0] ?? (await browser.newPage());
}, 90_000);

afterAll(async () => {
  await browser?.close();
  await stopAll();
  cleanTemp();
}, 30_000);

describe('dashboard against the live server', () => {
  it('takes the token from the address, hides it, and lists the runs', async () => {
    await page.goto(server.url);
    expect(new URL(page.url()).searchParams.has('token')).toBe(false);
    await waitFor('link open', () => page.locator('#link[data-state="open"]').count(), 10_000);
    expect(await page.locator('.bench-log h2').textContent()).toBe('Bench log');
  }, 30_000);

  it('draws real data in every chart of a healthy run (MSD, D, temperature, spectrum, drift, field map)', async () => {
    const rig = startRig(server, 'clean', ['--frames', '3000', '--speed', '12', '--run-id', 'e2e-clean']);
    await openRun('e2e-clean');
    // the common-mode spectrum needs 8 segments of 256 frames (src/detectors/vibration/README.md)
    const drawn = await waitFor('all charts drawn', async () => {
      const d = await drawnCharts(page);
      return Object.values(d).every((c) => c.points > 0 && c.pixels > 0) && Object.keys(d).length === 7 ? d : null;
    }, 40_000);
    expect(Object.keys(drawn).sort()).toEqual(['diffusion', 'driftPath', 'driftVelocity', 'field', 'msd', 'spectrum', 'temperature']);
    expect(drawn.msd.points).toBeGreaterThanOrEqual(5);
    expect(await page.locator('#strip').getAttribute('data-level')).not.toBe('stop');
    expect(Number(await page.locator('[data-tally="particles"] .tally-value').textContent())).toBeGreaterThan(0);
    await page.screenshot({ path: join(DOCS, 'healthy.png'), fullPage: true });
    await rig.done;
  }, 90_000);

  it('shows a stop-level alert as the HALT banner: full width, tall, double-bordered, pulsing, announced', async () => {
    // a second server whose recording quota (200 kB) a clean run passes within seconds: the
    // recording stops with a `stop` alert, the one stop level that needs no physics to fire
    const quotaServer = await startServe(tempDir('jostle-e2e-quota-'), 0, ['--quota', '200000']);
    const rig = startRig(quotaServer, 'clean', ['--frames', '1200', '--speed', '12', '--run-id', 'e2e-halt']);
    await waitFor('run e2e-halt in /api/runs', async () => {
      const r = await fetch(`http://127.0.0.1:${quotaServer.port}/api/runs`, { headers: { authorization: `Bearer ${quotaServer.token}` } });
      return ((await r.json()) as { id: string }[]).some((x) => x.id === 'e2e-halt');
    }, 20_000);
    await page.goto(`${quotaServer.url}&run=e2e-halt`);
    await waitFor('stop level on the strip', async () => (await page.locator('#strip').getAttribute('data-level')) === 'stop', 30_000);
    const banner = page.locator('.banner');
    expect(await banner.getAttribute('class')).toContain('banner-stop');
    expect(await banner.getAttribute('role')).toBe('alert');
    expect(await banner.locator('.banner-word').textContent()).toBe('HALT');
    expect(await banner.locator('.banner-icon').textContent()).toBe('⬣');
    const look = await banner.evaluate((el) => {
      const style = getComputedStyle(el);
      const box = el.getBoundingClientRect();
      const host = el.parentElement!.getBoundingClientRect();
      return { borderStyle: style.borderTopStyle, borderWidth: style.borderTopWidth, outline: style.outlineStyle, animation: style.animationName, width: box.width, hostWidth: host.width, height: box.height, fontSize: parseFloat(style.fontSize) };
    });
    expect(look.borderStyle).toBe('double');
    expect(look.borderWidth).toBe('6px');
    expect(look.outline).toBe('solid');
    expect(look.animation).toBe('halt-pulse');
    expect(look.width).toBeGreaterThan(0.95 * look.hostWidth);
    expect(look.fontSize).toBeGreaterThanOrEqual(30); // 2 rem on the 17 px base
    expect(look.height).toBeGreaterThan(2 * look.fontSize);
    // the recording card carries the same level, in words and in its border
    const card = page.locator('.alert-card', { hasText: 'recording stopped' }).first();
    expect(await card.getAttribute('class')).toContain('level-stop');
    expect(await card.textContent()).toContain('HALT');
    await page.screenshot({ path: join(DOCS, 'halt.png'), fullPage: true });
    await rig.done;
    await quotaServer.stop();
  }, 90_000);

  it('raises the drift alert in the page when drift starts mid-run, and acknowledges it with k', async () => {
    const rig = startRig(server, 'drift', ['--speed', '4', '--run-id', 'e2e-drift']);
    await openRun('e2e-drift');
    await waitFor('first data', async () => ((await dataTime(page)) ?? -1) >= 0, 20_000);
    const t0 = (await dataTime(page)) as number;
    if (t0 < 18) expect(['none', 'info']).toContain(await page.locator('#strip').getAttribute('data-level'));
    await waitFor('drift alert card', () => page.locator('.alert-card', { hasText: 'drift' }).filter({ hasText: /Caution|HALT/ }).count(), 40_000);
    expect(['warn', 'stop']).toContain(await page.locator('#strip').getAttribute('data-level'));
    expect(await page.locator('.banner').textContent()).toMatch(/Caution|HALT/);
    expect(await page.locator('.alert-card', { hasText: 'drift' }).first().textContent()).toMatch(/µm\/s/);
    await page.screenshot({ path: join(DOCS, 'alerting.png'), fullPage: true });
    // k acknowledges the newest open alert; the drift card's own button acknowledges drift
    const newest = await page.evaluate(() => {
      const s = (window as unknown as { __jostle: { state: () => { report: { alerts: { id: string; start: number; end: number | null }[] } } | null } }).__jostle.state();
      return [...(s?.report.alerts ?? [])].filter((a) => a.end === null).sort((a, b) => b.start - a.start)[0].id;
    });
    await page.locator('body').press('k');
    // the drift card's own button, unless k already acknowledged drift (it is the newest alert).
    // The server's answer to k may disable the button between a check and a click, so the click
    // is tried briefly and the server's state below is the assertion.
    const driftButton = page.locator('.alert-card', { hasText: 'drift' }).locator('button.ack');
    if (await driftButton.isEnabled()) await driftButton.click({ timeout: 2_000 }).catch(() => undefined);
    const acknowledged = await waitFor('server marks both alerts acknowledged', () => page.evaluate((first) => {
      const s = (window as unknown as { __jostle: { state: () => { report: { alerts: { id: string; kind: string; detail: { acknowledged?: boolean } }[] } } | null } }).__jostle.state();
      const seen = (s?.report.alerts ?? []).filter((a) => a.detail.acknowledged === true);
      return seen.some((a) => a.kind === 'drift') && seen.some((a) => a.id === first) ? seen.map((a) => a.id) : null;
    }, newest), 15_000);
    expect(acknowledged).toContain(newest);
    expect(await page.locator('.alert-card', { hasText: 'drift' }).getAttribute('class')).toContain('seen');

    // tags by keyboard: l (label), [ … ] segment with a note, . point mark
    await page.locator('body').press('l');
    await page.keyboard.type('refocus');
    await page.keyboard.press('Enter');
    await page.locator('body').press('[');
    const opened = (await dataTime(page)) as number;
    await waitFor('data time moves on', async () => ((await dataTime(page)) ?? 0) > opened + 1, 10_000);
    await page.locator('body').press('n');
    await page.keyboard.type('bumped the table');
    await page.keyboard.press('Enter');
    await page.locator('body').press(']');
    await page.locator('body').press('l');
    await page.keyboard.type('tap');
    await page.keyboard.press('Enter');
    await page.locator('body').press('.');
    await waitFor('tags in the report', () => page.evaluate(() => {
      const s = (window as unknown as { __jostle: { state: () => { report: { tags?: { label: string }[] } } | null } }).__jostle.state();
      const labels = (s?.report.tags ?? []).map((t) => t.label);
      return labels.includes('refocus') && labels.includes('tap');
    }), 15_000);
    await rig.done;
    const csv = await (await fetch(`http://127.0.0.1:${server.port}/api/runs/e2e-drift/tags.csv`, { headers: { authorization: `Bearer ${server.token}` } })).text();
    const rows = csv.trim().split('\n');
    expect(rows[0]).toMatch(/^label,start,end,note/);
    const segment = rows.find((r) => r.startsWith('refocus,'))!.split(',');
    expect(Number(segment[2])).toBeGreaterThan(Number(segment[1]));
    expect(segment.slice(3).join(',')).toContain('bumped the table');
    const mark = rows.find((r) => r.startsWith('tap,'))!.split(',');
    expect(mark[2]).toBe('');
  }, 120_000);

  it('shows the lost link, reconnects after the server restarts on the same port, and shows the run again', async () => {
    const before = await page.evaluate(() => (window as unknown as { __jostle: { snapshots: number } }).__jostle.snapshots);
    const port = server.port;
    await server.stop();
    await waitFor('link lost shown', () => page.locator('#link[data-state="waiting"]').count(), 15_000);
    expect(await page.locator('#link').textContent()).toMatch(/link lost/);
    expect(await page.locator('.watch-desk').getAttribute('class')).toContain('stale');
    server = await startServe(data, port);
    await waitFor('link open again', () => page.locator('#link[data-state="open"]').count(), 30_000);
    await waitFor('a fresh snapshot', () => page.evaluate((n) => (window as unknown as { __jostle: { snapshots: number } }).__jostle.snapshots > n, before), 15_000);
    // the render runs on the next animation frame after the snapshot
    const drawn = await waitFor('charts redrawn', async () => {
      const d = await drawnCharts(page);
      return d.msd.pixels > 0 && d.diffusion.pixels > 0 ? d : null;
    }, 10_000);
    expect(drawn.msd.points).toBeGreaterThan(0);
    expect(await page.locator('.watch-desk').getAttribute('class')).not.toContain('stale');
    expect(drawn.msd.pixels).toBeGreaterThan(0);
    expect(drawn.diffusion.pixels).toBeGreaterThan(0);
    // the recorded run kept its tags across the restart
    const labels = await page.evaluate(() => ((window as unknown as { __jostle: { state: () => { report: { tags?: { label: string }[] } } | null } }).__jostle.state()?.report.tags ?? []).map((t) => t.label));
    expect(labels).toEqual(expect.arrayContaining(['refocus', 'tap']));
  }, 90_000);

  it('goes back to the run list with g, shows each run with its worst alert, and opens one on click', async () => {
    await page.locator('body').press('g');
    const row = page.locator('tr.run-row[data-run="e2e-drift"]');
    await waitFor('run list row', () => row.count(), 10_000);
    expect(await row.locator('td.worst').textContent()).toMatch(/▲ warn|⬣ stop/);
    expect(await page.locator('tr.run-row[data-run="e2e-clean"]').count()).toBe(1);
    await row.click();
    await waitFor('run view open', () => page.locator('.run-title', { hasText: 'e2e-drift' }).count(), 10_000);
    expect(new URL(page.url()).searchParams.get('run')).toBe('e2e-drift');
  }, 30_000);
});
