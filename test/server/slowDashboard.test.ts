import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { DashboardChannel, type SocketLike } from '../../server/dashboardChannel.js';
import type { RunState } from '../../server/protocol.js';
import { RigClient } from '../../tools/rig/rigClient.js';
import { brownianFrames } from '../helpers/brownianFrames.js';
import { collect, testServer, until } from './serverHarness.js';

// STYLE.md habit 12 (guard the socket): bufferedAmount before sending, coalesce to the latest
// for slow clients, ping/pong heartbeat with terminate() for silent peers.

class FakeSocket implements SocketLike {
  bufferedAmount = 0;
  readyState = 1;
  sent: string[] = [];
  callbacks: (() => void)[] = [];
  closedWith: number | undefined;
  send(data: Buffer | string, callback?: () => void): void {
    this.sent.push(String(data));
    if (callback) this.callbacks.push(callback);
  }
  close(code?: number): void {
    this.closedWith = code;
    this.readyState = 3;
  }
}

const state = (frames: number) => ({ run: 'r', label: '', state: 'live', counters: { frames } }) as unknown as RunState;

describe('DashboardChannel', () => {
  describe('#update', () => {
    it('sends at once while the socket is under its high-water mark', () => {
      const socket = new FakeSocket();
      const channel = new DashboardChannel(socket, 'json', { highWaterBytes: 100 });
      channel.update(state(1));
      channel.update(state(2));
      expect(socket.sent.map((s) => JSON.parse(s).counters.frames)).toEqual([1, 2]);
      expect(channel.coalesced).toBe(0);
    });

    it('coalesces updates for a slow socket: latest wins, and the next update sent carries the count', () => {
      const socket = new FakeSocket();
      const channel = new DashboardChannel(socket, 'json', { highWaterBytes: 100 });
      socket.bufferedAmount = 500;
      for (let k = 1; k <= 5; k++) channel.update(state(k));
      expect(socket.sent).toEqual([]);
      expect(channel.coalesced).toBe(4);
      socket.bufferedAmount = 0;
      socket.callbacks.splice(0).forEach((cb) => cb());
      channel.flush();
      const sent = socket.sent.map((s) => JSON.parse(s));
      expect(sent).toHaveLength(1);
      expect(sent[0]).toMatchObject({ type: 'update', coalesced: 4, counters: { frames: 5 } });
    });
  });

  describe('#send', () => {
    it('never coalesces alerts, and sends them before a pending update', () => {
      const socket = new FakeSocket();
      const channel = new DashboardChannel(socket, 'json', { highWaterBytes: 100, queueLength: 4 });
      socket.bufferedAmount = 500;
      channel.update(state(1));
      channel.send({ type: 'runs', runs: [] });
      channel.send({ type: 'runs', runs: [] });
      socket.bufferedAmount = 0;
      channel.flush();
      expect(socket.sent.map((s) => JSON.parse(s).type)).toEqual(['runs', 'runs', 'update']);
    });

    it('closes a dashboard whose queue overflows with 1013', () => {
      const socket = new FakeSocket();
      const channel = new DashboardChannel(socket, 'json', { highWaterBytes: 100, queueLength: 2 });
      socket.bufferedAmount = 500;
      for (let k = 0; k < 3; k++) channel.send({ type: 'runs', runs: [] });
      expect(socket.closedWith).toBe(1013);
    });

    it('rejects a bad queueLength with RangeError', () => {
      expect(() => new DashboardChannel(new FakeSocket(), 'json', { queueLength: 0 })).toThrow(RangeError);
    });
  });
});

const TOKEN = 'test-token-0123';
let server: Awaited<ReturnType<typeof testServer>>;
beforeAll(async () => {
  server = await testServer({ dashboardHighWaterBytes: 64 * 1024, trailFrames: 60 });
});
afterAll(async () => {
  await server.stop();
});

describe('a slow dashboard', () => {
  it('gets coalesced updates and a counter, and slows neither the rig nor the other dashboards', async () => {
    const rig = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
    await rig.open({ type: 'run', run: 'slow', frameInterval: 0.05 });
    const frames = brownianFrames({ seed: 51, particles: 400, frames: 80, frameInterval: 0.05, diffusion: 0.4, sigma: 0.02, field: 400 });
    const fast = await collect(`${server.ws}/watch?run=slow&token=${TOKEN}`);
    const slow = await collect(`${server.ws}/watch?run=slow&token=${TOKEN}`);
    await slow.next((m) => m.type === 'snapshot');
    // the slow dashboard stops reading: its TCP window fills, then the server's bufferedAmount grows
    (slow.socket as unknown as { _socket: { pause(): void } })._socket.pause();
    for (const frame of frames) {
      await rig.frame(frame);
      await new Promise((r) => setTimeout(r, 20));
    }
    const run = server.registry.get('slow')!;
    await until(() => run.pipeline.counts().frames === 80);
    // all frames went through while the slow dashboard was still paused
    await until(() => fast.messages.some((m) => m.type === 'update' && (m.counters as { frames: number }).frames === 80), 10_000);
    const channels = [...run.dashboards];
    const coalesced = Math.max(...channels.map((c) => c.coalesced));
    expect(coalesced).toBeGreaterThan(0);
    const last = fast.messages.filter((m) => m.type === 'update').at(-1) as { counters: { droppedUpdates: number } };
    expect(last.counters.droppedUpdates).toBeGreaterThan(0);
    // once it reads again it catches up with the latest state, told how many it missed
    (slow.socket as unknown as { _socket: { resume(): void } })._socket.resume();
    const caughtUp = await slow.next((m) => m.type === 'update' && (m.coalesced as number) > 0, 10_000);
    expect(caughtUp.coalesced).toBeGreaterThan(0);
    await rig.end();
    await Promise.all([fast.close(), slow.close(), rig.close()]);
  }, 30_000);
});

describe('heartbeat', () => {
  it('terminates a peer that stops answering pings, and keeps one that answers', async () => {
    const server = await testServer({ heartbeatMs: 50 });
    const before = server.counters.terminatedPeers;
    const silent = new WebSocket(`${server.ws}/watch?token=${TOKEN}`, { autoPong: false });
    const alive = await collect(`${server.ws}/watch?token=${TOKEN}`);
    const closed = new Promise<number>((resolve) => silent.once('close', (code) => resolve(code)));
    expect(await closed).toBe(1006); // terminate(): no closing handshake
    expect(server.counters.terminatedPeers).toBeGreaterThan(before);
    await new Promise((r) => setTimeout(r, 250));
    expect(alive.socket.readyState).toBe(WebSocket.OPEN);
    await alive.close();
    await server.stop();
  });
});
