import { request } from 'node:http';
import { connect } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { hasToken } from '../../server/accessGuard.js';
import { startServer } from '../../server/startServer.js';
import { RigClient } from '../../tools/rig/rigClient.js';
import { collect, testServer, until } from '../server/serverHarness.js';

// Access control of CONTRACTS §4, tried the way a curious colleague on the lab network would:
// no token, wrong tokens of every shape, a foreign browser Origin, oversized messages on both
// endpoints, raw upgrade paths with tricks, and where the server binds. RFC 6455 §4.1/§4.2 (the
// refusal is a plain HTTP status, no upgrade); RFC 6750 §2.1 (Bearer header).

const TOKEN = 'test-token-0123';
let server: Awaited<ReturnType<typeof testServer>>;
beforeAll(async () => {
  server = await testServer({ maxPayloadBytes: 16 * 1024 });
  const rig = await RigClient.connect(`${server.ws}/rig`, { token: TOKEN });
  await rig.open({ type: 'run', run: 'guarded', frameInterval: 0.05 });
  await rig.end();
  await rig.close();
});
afterAll(async () => {
  await server.stop();
});

/** Sends a raw upgrade request and returns the status line the server answers with. */
function rawUpgrade(path: string, headers: Record<string, string> = {}): Promise<string> {
  return new Promise((resolve, reject) => {
    const socket = connect(server.port, '127.0.0.1');
    let text = '';
    socket.on('data', (chunk) => {
      text += String(chunk);
      if (text.includes('\r\n')) {
        resolve(text.split('\r\n')[0]);
        socket.destroy();
      }
    });
    socket.on('error', reject);
    const lines = [`GET ${path} HTTP/1.1`, `Host: 127.0.0.1:${server.port}`, 'Upgrade: websocket', 'Connection: Upgrade', 'Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==', 'Sec-WebSocket-Version: 13',
      ...Object.entries(headers).map(([k, v]) => `${k}: ${v}`)];
    socket.write(`${lines.join('\r\n')}\r\n\r\n`);
  });
}

function get(path: string, headers: Record<string, string> = {}): Promise<number> {
  return new Promise((resolve, reject) => {
    const req = request({ host: '127.0.0.1', port: server.port, path, headers }, (res) => {
      res.resume();
      res.on('end', () => resolve(res.statusCode ?? 0));
    });
    req.on('error', reject);
    req.end();
  });
}

const wrongTokens = ['', 'test-token-012', 'test-token-01234', 'TEST-TOKEN-0123', ' test-token-0123x', 'test-token-0124', 'x'.repeat(10_000), 'test-token-0123\u0000', '%74est-token-0123'];

describe('the token', () => {
  it('is needed on /rig, /watch and /api: none or a wrong one of any length gets 401 before any upgrade', async () => {
    for (const path of ['/rig', '/watch', '/watch?run=guarded']) {
      expect(await rawUpgrade(path)).toBe('HTTP/1.1 401 Unauthorized');
      for (const wrong of wrongTokens) {
        expect(await rawUpgrade(`${path}${path.includes('?') ? '&' : '?'}token=${encodeURIComponent(wrong)}`)).toBe('HTTP/1.1 401 Unauthorized');
        if (!/[\u0000]/.test(wrong)) expect(await rawUpgrade(path, { Authorization: `Bearer ${wrong}` })).toBe('HTTP/1.1 401 Unauthorized');
      }
      expect(await rawUpgrade(path, { Authorization: `Bearer ${TOKEN}` })).toBe('HTTP/1.1 101 Switching Protocols');
    }
    for (const wrong of wrongTokens) expect(await get(`/api/runs?token=${encodeURIComponent(wrong)}`)).toBe(401);
    expect(await get('/api/runs', { authorization: `Basic ${Buffer.from(`u:${TOKEN}`).toString('base64')}` })).toBe(401); // only Bearer
    expect(await get(`/api/runs?token=${TOKEN}`)).toBe(200);
  });

  it('is compared on SHA-256 digests, so a guess of any length is refused without throwing (timingSafeEqual needs equal lengths)', () => {
    for (const wrong of [...wrongTokens, 'a', 'é'.repeat(40)]) {
      const req = { url: `/api/runs?token=${encodeURIComponent(wrong)}`, headers: {} } as Parameters<typeof hasToken>[0];
      expect(hasToken(req, TOKEN)).toBe(false);
      expect(hasToken({ url: '/', headers: { authorization: `Bearer ${wrong}` } } as Parameters<typeof hasToken>[0], TOKEN)).toBe(false);
    }
    expect(hasToken({ url: '/api/runs?token=%ED%A0%80', headers: {} } as Parameters<typeof hasToken>[0], TOKEN)).toBe(false); // a lone surrogate
    expect(hasToken({ url: '/', headers: { authorization: `Bearer ${TOKEN}` } } as Parameters<typeof hasToken>[0], TOKEN)).toBe(true);
  });
});

describe('the Origin', () => {
  it('of a browser page from another site gets 403 on the WebSocket endpoints and on /api, even with the token', async () => {
    const bearer = { Authorization: `Bearer ${TOKEN}` };
    for (const origin of ['http://evil.example', `http://127.0.0.1:${server.port + 1}`, 'null', 'file://', `http://localhost:${server.port}`, 'not a url']) {
      expect(await rawUpgrade('/rig', { ...bearer, Origin: origin })).toBe('HTTP/1.1 403 Forbidden');
      expect(await rawUpgrade('/watch', { ...bearer, Origin: origin })).toBe('HTTP/1.1 403 Forbidden');
      expect(await get('/api/runs', { authorization: `Bearer ${TOKEN}`, origin })).toBe(403);
    }
    expect(await rawUpgrade('/watch', { ...bearer, Origin: `http://127.0.0.1:${server.port}` })).toBe('HTTP/1.1 101 Switching Protocols');
  });
});

describe('upgrade paths', () => {
  it('with tricks or unknown targets are refused before the token is even looked at', async () => {
    for (const path of ['/rig/', '/rig/../watch', '/%72ig', '/watch%2f', '/./rig', '/api/runs', '/', '//rig']) {
      expect(await rawUpgrade(path, { Authorization: `Bearer ${TOKEN}` })).toMatch(/^HTTP\/1\.1 40[04] /);
    }
    expect(await rawUpgrade('/watch?run=..', { Authorization: `Bearer ${TOKEN}` })).toBe('HTTP/1.1 400 Bad Request');
    expect(await rawUpgrade('/watch?run=no-such-run', { Authorization: `Bearer ${TOKEN}` })).toBe('HTTP/1.1 404 Not Found');
  });
});

describe('oversized messages', () => {
  it('close the socket with 1009 and are counted, on /rig and on /watch; the server goes on', async () => {
    const before = server.counters.oversizedMessages;
    for (const path of ['/rig', '/watch?run=guarded']) {
      const c = await collect(`${server.ws}${path}`, { authorization: `Bearer ${TOKEN}` });
      const closed = new Promise<number>((resolve) => c.socket.once('close', (code) => resolve(code)));
      c.socket.send(Buffer.alloc(16 * 1024 + 1, 0x20), { binary: false });
      expect(await closed).toBe(1009);
    }
    await until(() => server.counters.oversizedMessages === before + 2);
    const after = await collect(`${server.ws}/watch?run=guarded`, { authorization: `Bearer ${TOKEN}` });
    await after.next((m) => m.type === 'snapshot');
    expect(after.socket.readyState).toBe(WebSocket.OPEN);
    await after.close();
  });
});

describe('binding', () => {
  it('is to 127.0.0.1 by default; another interface is refused without allowRemote, and warned about with it', async () => {
    const s = await testServer();
    expect(new URL(s.url).hostname).toBe('127.0.0.1');
    await s.stop();
    await expect(startServer({ host: '0.0.0.0', port: 0, token: TOKEN, log: () => undefined })).rejects.toThrow(RangeError);
    // 192.0.2.1 is TEST-NET-1 (RFC 5737), assigned to no machine: the warning comes before the
    // bind, which then fails, so nothing ever listens beyond loopback in this test
    const log: string[] = [];
    const data = (await import('node:fs')).mkdtempSync((await import('node:path')).join((await import('node:os')).tmpdir(), 'jostle-bind-'));
    await expect(startServer({ host: '192.0.2.1', allowRemote: true, port: 0, data, token: TOKEN, log: (l) => log.push(l) })).rejects.toMatchObject({ code: 'EADDRNOTAVAIL' });
    expect(log.join('\n')).toMatch(/warning: listening on 192\.0\.2\.1, reachable from other machines/);
    expect(log.join('\n')).not.toContain(TOKEN);
    (await import('node:fs')).rmSync(data, { recursive: true, force: true });
  });
});
