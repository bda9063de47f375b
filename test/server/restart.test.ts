import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { startServer } from '../../server/startServer.js';
import { RigClient } from '../../tools/rig/rigClient.js';
import { brownianFrames } from '../helpers/brownianFrames.js';

// A recorded run outlives the server: after a clean restart its report, list row and exports
// are served from the recording, and a rig can reopen it.

const data = mkdtempSync(join(tmpdir(), 'jostle-restart-'));
afterAll(() => rmSync(data, { recursive: true, force: true }));
const TOKEN = 'restart-token-77';
const frames = brownianFrames({ seed: 61, particles: 25, frames: 200, frameInterval: 0.05, diffusion: 0.5, sigma: 0.02 });
const headers = { authorization: `Bearer ${TOKEN}` };

describe('restart', () => {
  it('serves an ended run after a restart with the same report, and lets a rig reopen it', async () => {
    const first = await startServer({ port: 0, data, token: TOKEN, log: () => undefined });
    const rig = await RigClient.connect(`ws://127.0.0.1:${first.port}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'kept', frameInterval: 0.05, radius: 0.5, temperature: 20, label: 'kept run' });
    for (const f of frames.slice(0, 150)) await rig.frame(f);
    await rig.temperature(3, 20.5);
    await rig.end();
    await rig.close();
    const before = await (await fetch(`http://127.0.0.1:${first.port}/api/runs/kept/report`, { headers })).json();
    await first.close();

    const second = await startServer({ port: 0, data, token: TOKEN, log: () => undefined });
    try {
      const runs = await (await fetch(`http://127.0.0.1:${second.port}/api/runs`, { headers })).json();
      expect(runs).toHaveLength(1);
      expect(runs[0]).toMatchObject({ id: 'kept', label: 'kept run', state: 'ended', frames: 150 });
      expect(Date.parse(runs[0].started)).toBeLessThanOrEqual(Date.now());
      const after = await (await fetch(`http://127.0.0.1:${second.port}/api/runs/kept/report`, { headers })).json();
      expect(after.diffusion.coefficient).toEqual(before.diffusion.coefficient);
      expect(after.msd).toEqual(before.msd);
      expect(after.temperature.reported).toBe(before.temperature.reported);
      // a later `run` with the same id reopens it and goes on after the recorded frames
      const again = await RigClient.connect(`ws://127.0.0.1:${second.port}/rig`, { token: TOKEN });
      const accepted = await again.open({ type: 'run', run: 'kept', frameInterval: 0.05 });
      expect(accepted).toMatchObject({ resumed: true, lastIndex: 149 });
      for (const f of frames.slice(150)) await again.frame(f);
      await again.end();
      await again.close();
      const csv = await (await fetch(`http://127.0.0.1:${second.port}/api/runs/kept/frames.csv`, { headers })).text();
      expect(csv.trimEnd().split('\n')).toHaveLength(1 + 200 * 25);
      const reopened = await (await fetch(`http://127.0.0.1:${second.port}/api/runs/kept/report`, { headers })).json();
      expect(reopened.input.frames).toBe(200);
    } finally {
      await second.close();
    }
  });
});
