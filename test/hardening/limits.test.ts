import { describe, expect, it } from 'vitest';
import { resolveServerOptions, SERVER_DEFAULTS } from '../../server/serverOptions.js';

// Every limit of server/README.md "Options and limits" is an option with a documented default,
// and a bad value is refused at start with a RangeError naming the option (STYLE: bad
// parameters at construction). Enforcement of each limit is tested where it bites:
// maxPayloadBytes (access.test.ts, 1009 on both endpoints), maxParticlesPerFrame
// (fuzzRoutes.test.ts, JOSTLE_E_FRAME_TOO_LARGE), maxDashboardsPerRun (liveFaults.test.ts, 1013),
// dashboardHighWaterBytes (liveFaults.test.ts, the deaf dashboard), the 64 KiB tag body
// (fuzzRoutes.test.ts, JOSTLE_E_BODY); maxRuns, quotaBytes, heartbeatMs and
// dashboardQueueLength in test/server (rigEndpoint, dashboards, slowDashboard).

describe('resolveServerOptions', () => {
  it('fills every limit with its documented default', () => {
    const o = resolveServerOptions({ log: () => undefined });
    expect(o).toMatchObject({
      host: '127.0.0.1', maxPayloadBytes: 16 * 1024 * 1024, maxParticlesPerFrame: 100_000, maxRuns: 16, maxDashboardsPerRun: 32, maxRunListWatchers: 64, rigOpenTimeoutMs: 30_000,
      dashboardQueueLength: 32, dashboardHighWaterBytes: 1024 * 1024, quotaBytes: 2 * 1024 ** 3, heartbeatMs: 15_000, flushMs: 250,
    });
    expect(o.allowRemote).toBe(false);
  });

  it('refuses a bad value of each limit with a RangeError naming it', () => {
    const bad: Record<string, unknown[]> = {
      maxPayloadBytes: [0, 1023, 1.5, -1, NaN, 'big'],
      maxParticlesPerFrame: [0, -5, 2.5, Infinity],
      maxRuns: [0, -1, 1.1],
      maxDashboardsPerRun: [0, NaN],
      maxRunListWatchers: [0, 1.5],
      rigOpenTimeoutMs: [0, 9],
      dashboardQueueLength: [0, 0.5],
      dashboardHighWaterBytes: [0, -1],
      quotaBytes: [0, -1, 0.5],
      heartbeatMs: [0, 9],
      flushMs: [0, 1001],
      port: [-1, 65536, 1.5],
      trailFrames: [0, 101],
      trailSpacingMs: [-1, 10_001, 2.5],
    };
    for (const [name, values] of Object.entries(bad)) {
      expect(Object.keys(SERVER_DEFAULTS)).toContain(name);
      for (const value of values) expect(() => resolveServerOptions({ [name]: value, log: () => undefined })).toThrow(new RegExp(`server option ${name}`));
    }
    expect(() => resolveServerOptions({ summaryHz: 11 })).toThrow(/summaryHz/);
    expect(() => resolveServerOptions({ recordingThread: 'yes' as unknown as boolean })).toThrow(/recordingThread/);
    expect(resolveServerOptions({}).recordingThread).toBe(true);
    expect(() => resolveServerOptions({ token: 'short' })).toThrow(/token/);
    for (const host of ['0.0.0.0', '::', '192.168.1.20', 'lab-pc.local']) expect(() => resolveServerOptions({ host })).toThrow(/allowRemote/);
    for (const host of ['127.0.0.1', '127.1.2.3', '::1', 'localhost']) expect(resolveServerOptions({ host, log: () => undefined }).host).toBe(host);
  });
});
