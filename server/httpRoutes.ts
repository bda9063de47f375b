import { createReadStream, existsSync, statSync } from 'node:fs';
import type { IncomingMessage, ServerResponse } from 'node:http';
import { extname, join, normalize, resolve, sep } from 'node:path';
import { formatTagsCsv } from '../tools/io/writeTagsCsv.js';
import { formatFrameCsvRows, framesCsvHeader, type FrameCsvColumns } from '../tools/io/writeFramesCsv.js';
import { hasToken, originAllowed } from './accessGuard.js';
import { isRunId, parseTagMessage } from './rigMessageFields.js';
import type { RunRegistry } from './runRegistry.js';
import { ServerError } from './serverError.js';

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.map': 'application/json',
};

const MAX_BODY_BYTES = 64 * 1024;

/** True when a raw request path tries to leave its folder or hide a separator. */
export function isPathTrick(rawPath: string): boolean {
  return /%2e|%2f|%5c|\\|\0/i.test(rawPath) || rawPath.split('/').some((part) => part === '..' || part === '.');
}

function json(response: ServerResponse, status: number, body: unknown): void {
  const text = JSON.stringify(body);
  response.writeHead(status, { 'content-type': 'application/json', 'cache-control': 'no-store' });
  response.end(text);
}

function failure(response: ServerResponse, status: number, code: string, reason: string): void {
  json(response, status, { error: { code, reason } });
}

async function readBody(request: IncomingMessage): Promise<string> {
  let size = 0;
  const chunks: Buffer[] = [];
  for await (const chunk of request) {
    size += (chunk as Buffer).length;
    if (size > MAX_BODY_BYTES) throw new ServerError('JOSTLE_E_BODY', 'request body too large');
    chunks.push(chunk as Buffer);
  }
  return Buffer.concat(chunks).toString('utf8');
}

/**
 * The HTTP side (CONTRACTS §4): `/api/*` behind the token and the Origin check, and the
 * dashboard's static files (open). Routes:
 * `GET /api/runs`, `GET /api/runs/<id>/report`, `GET /api/runs/<id>/frames.csv`,
 * `GET /api/runs/<id>/tags.csv`, `POST /api/runs/<id>/tags`. Raw paths with `..`, `.` or encoded
 * dots, slashes or backslashes get 400; an unknown run 404.
 *
 * @example
 * createServer((req, res) => void handleHttp(req, res, registry, token, webRoot))
 */
export async function handleHttp(request: IncomingMessage, response: ServerResponse, registry: RunRegistry, token: string, webRoot: string | undefined): Promise<void> {
  const raw = (request.url ?? '/').split('?')[0];
  if (isPathTrick(raw)) return failure(response, 400, 'JOSTLE_E_PATH', 'path not allowed');
  if (raw === '/api' || raw.startsWith('/api/')) {
    if (!originAllowed(request)) return failure(response, 403, 'JOSTLE_E_ORIGIN', 'origin does not match host');
    if (!hasToken(request, token)) return failure(response, 401, 'JOSTLE_E_TOKEN', 'token missing or wrong');
    return api(request, response, raw, registry);
  }
  if (request.method !== 'GET' && request.method !== 'HEAD') return failure(response, 405, 'JOSTLE_E_METHOD', 'method not allowed');
  return serveStatic(response, raw, webRoot);
}

async function api(request: IncomingMessage, response: ServerResponse, path: string, registry: RunRegistry): Promise<void> {
  const parts = path.split('/').filter((p) => p !== '');
  // parts: ['api', 'runs', id?, leaf?]
  if (parts[1] !== 'runs' || parts.length > 4) return failure(response, 404, 'JOSTLE_E_ROUTE', 'no such route');
  if (parts.length === 2) {
    if (request.method !== 'GET') return failure(response, 405, 'JOSTLE_E_METHOD', 'method not allowed');
    return json(response, 200, registry.list());
  }
  let id: string;
  try {
    id = decodeURIComponent(parts[2]);
  } catch {
    return failure(response, 400, 'JOSTLE_E_RUN_ID', 'run id not valid'); // broken %-encoding
  }
  if (!isRunId(id)) return failure(response, 400, 'JOSTLE_E_RUN_ID', 'run id not valid');
  const leaf = parts[3];
  // in memory (also a run opened after the recording stopped) or recorded
  const known = registry.get(id) !== undefined;
  if (!known) return failure(response, 404, 'JOSTLE_E_UNKNOWN_RUN', 'no such run');
  if (request.method === 'POST' && leaf === 'tags') {
    let tag;
    try {
      const body = JSON.parse(await readBody(request)) as unknown;
      if (body === null || typeof body !== 'object' || Array.isArray(body)) throw new ServerError('JOSTLE_E_TAG', 'tag must be a JSON object');
      tag = parseTagMessage(body as Record<string, unknown>);
    } catch (error) {
      const code = error instanceof ServerError ? error.code : 'JOSTLE_E_TAG';
      return failure(response, 400, code, error instanceof ServerError ? error.message : 'tag must be a JSON object');
    }
    const run = registry.get(id);
    run?.input({ kind: 'tag', tag });
    return json(response, 201, tag);
  }
  if (request.method !== 'GET') return failure(response, 405, 'JOSTLE_E_METHOD', 'method not allowed');
  if (leaf === 'report') return json(response, 200, registry.get(id)?.report());
  if (leaf === 'frames.csv') {
    registry.get(id)?.flush();
    response.writeHead(200, { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${id}.frames.csv"` });
    await streamFramesCsv(registry, id, response);
    return;
  }
  if (leaf === 'tags.csv') {
    response.writeHead(200, { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="${id}.tags.csv"` });
    response.end(formatTagsCsv(registry.recorder.tags(id)));
    return;
  }
  return failure(response, 404, 'JOSTLE_E_ROUTE', 'no such route');
}

/**
 * Writes a run's recorded frames as CSV, honouring back-pressure, and stops (closing the page
 * reader) when the client goes away.
 */
async function streamFramesCsv(registry: RunRegistry, id: string, response: ServerResponse): Promise<void> {
  let gone = false;
  response.once('close', () => {
    gone = true;
  });
  let columns: FrameCsvColumns | undefined;
  let pending = '';
  for (const frame of registry.recorder.frames(id)) {
    if (gone) return;
    if (columns === undefined) {
      columns = { z: frame.z !== undefined, id: frame.id !== undefined, intensity: frame.intensity !== undefined };
      pending += framesCsvHeader(columns);
    }
    pending += formatFrameCsvRows(frame, columns);
    if (pending.length >= 65_536) {
      const more = response.write(pending);
      pending = '';
      if (!more) await new Promise<void>((resolveDrain) => {
        const done = () => {
          response.off('drain', done);
          response.off('close', done);
          resolveDrain();
        };
        response.on('drain', done);
        response.on('close', done);
      });
    }
  }
  if (columns === undefined) pending += framesCsvHeader({ z: false, id: false, intensity: false });
  response.end(pending);
}

const PLACEHOLDER = resolve(import.meta.dirname, '..', 'web', 'index.html');

function serveStatic(response: ServerResponse, path: string, webRoot: string | undefined): void {
  const root = resolve(webRoot ?? join(import.meta.dirname, '..', 'web', 'dist'));
  let file: string;
  if (existsSync(root)) {
    file = normalize(join(root, path === '/' ? 'index.html' : path));
    if (file !== root && !file.startsWith(root + sep)) return failure(response, 400, 'JOSTLE_E_PATH', 'path not allowed');
  } else if (path === '/' || path === '/index.html') {
    file = PLACEHOLDER; // web/dist is not built yet: a placeholder page
  } else {
    return failure(response, 404, 'JOSTLE_E_NOT_FOUND', 'no such file');
  }
  if (!existsSync(file) || !statSync(file).isFile()) return failure(response, 404, 'JOSTLE_E_NOT_FOUND', 'no such file');
  response.writeHead(200, { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream' });
  createReadStream(file).pipe(response);
}
