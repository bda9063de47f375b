import { Writable } from 'node:stream';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../tools/cli/main.js';
import { testServer, until } from './serverHarness.js';

// The commands of CONTRACTS §1 that talk to a server: `simulate --url`, `replay --data --run`,
// and the usage errors of `serve` (exit 2, one line on stderr).

function io() {
  const make = () => {
    const w = new Writable({ write(chunk, _e, done) { (w as unknown as { text: string }).text += String(chunk); done(); } }) as Writable & { text: string };
    w.text = '';
    return w;
  };
  return { stdout: make(), stderr: make() as unknown as NodeJS.WriteStream & { text: string } };
}

let source: Awaited<ReturnType<typeof testServer>>;
let target: Awaited<ReturnType<typeof testServer>>;
beforeAll(async () => {
  source = await testServer();
  target = await testServer();
});
afterAll(async () => {
  await source.stop();
  await target.stop();
});

describe('jostle simulate --url', () => {
  it('streams a named scenario as a rig would, its reported temperature and settings included', async () => {
    const streams = io();
    const status = await main(['node', 'jostle', 'simulate', 'heating', '--frames', '200', '--url', `${source.ws}/rig?token=${source.token}`, '--fast', '--run-id', 'sim-heating'], streams);
    expect(streams.stderr.text).toBe('');
    expect(status).toBe(0);
    expect(streams.stdout.text).toMatch(/^run sim-heating: 200 frames/);
    await until(() => source.registry.get('sim-heating')?.state === 'ended');
    const run = source.registry.get('sim-heating')!;
    expect(run.settings.pipeline).toMatchObject({ frameInterval: 0.05, exposure: 0.01, radius: 0.5, temperature: 21, medium: 'water' });
    expect(run.report().temperature.reported).toBeCloseTo(21, 1);
  });

  it('streams in real time by default (×k with --speed): a short run takes its own duration / k', async () => {
    const streams = io();
    const started = Date.now();
    // 40 frames at 20 frames/s = 1.95 s of data; at --speed 4 about 0.5 s
    const status = await main(['node', 'jostle', 'simulate', 'clean', '--frames', '40', '--url', `${source.ws}/rig`, '--token', source.token, '--speed', '4', '--run-id', 'paced'], streams);
    const seconds = (Date.now() - started) / 1000;
    expect(status).toBe(0);
    expect(seconds).toBeGreaterThanOrEqual(0.45);
  });

  it('exits 2 with one line for a refused token', async () => {
    const streams = io();
    const status = await main(['node', 'jostle', 'simulate', 'clean', '--frames', '5', '--url', `${source.ws}/rig`, '--token', 'wrong-token-xyz', '--fast'], streams);
    expect(status).toBe(2);
    expect(streams.stderr.text).toMatch(/^jostle: cannot connect .*401\n$/);
  });
});

describe('jostle replay --data --run', () => {
  it('streams a recorded run to another server, which then holds the same frames and D', async () => {
    await until(() => source.registry.recorder.run('sim-heating')?.state === 'ended');
    const streams = io();
    const status = await main(['node', 'jostle', 'replay', '--data', source.data, '--run', 'sim-heating', '--as', 'copy', '--url', `${target.ws}/rig`, '--token', target.token, '--fast'], streams);
    expect(streams.stderr.text).toBe('');
    expect(status).toBe(0);
    await until(() => target.registry.get('copy')?.state === 'ended');
    const original = source.registry.get('sim-heating')!.report();
    const copy = target.registry.get('copy')!.report();
    expect(copy.input.frames).toBe(original.input.frames);
    expect(copy.diffusion.coefficient!.value).toBe(original.diffusion.coefficient!.value);
    expect(copy.temperature.reported).toBe(original.temperature.reported);
  });

  it('exits 2 for an unknown recorded run, and for --speed with --fast', async () => {
    const a = io();
    expect(await main(['node', 'jostle', 'replay', '--data', source.data, '--run', 'nobody', '--url', `${target.ws}/rig`], a)).toBe(2);
    expect(a.stderr.text).toMatch(/no run 'nobody'/);
    const b = io();
    expect(await main(['node', 'jostle', 'replay', 'x.csv', '--url', `${target.ws}/rig`, '--speed', '2', '--fast'], b)).toBe(2);
  });
});

describe('jostle serve', () => {
  it('exits 2 when asked to bind beyond loopback without --allow-remote', async () => {
    const streams = io();
    const status = await main(['node', 'jostle', 'serve', '--host', '0.0.0.0', '--port', '0', '--data', source.data], streams);
    expect(status).toBe(2);
    expect(streams.stderr.text).toMatch(/not loopback.*--allow-remote/);
    expect(streams.stdout.text).toBe('');
  });
});
