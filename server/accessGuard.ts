import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';
import { chmodSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import type { IncomingMessage } from 'node:http';
import { join } from 'node:path';

/**
 * The server's token: the option, else `JOSTLE_TOKEN`, else the one kept in `<data>/token`
 * (generated on first start: 24 random bytes, base64url, file mode 0600).
 *
 * @example
 * resolveToken(undefined, './jostle-data') // → 'q8V…' (the same on the next start)
 */
export function resolveToken(option: string | undefined, dataFolder: string, env: NodeJS.ProcessEnv = process.env): string {
  if (option) return option;
  if (env.JOSTLE_TOKEN) return env.JOSTLE_TOKEN;
  const path = join(dataFolder, 'token');
  try {
    const kept = readFileSync(path, 'utf8').trim();
    if (kept.length >= 8) return kept;
  } catch {
    // no token kept yet: make one below
  }
  mkdirSync(dataFolder, { recursive: true });
  const token = randomBytes(24).toString('base64url');
  writeFileSync(path, `${token}\n`, { mode: 0o600 });
  chmodSync(path, 0o600);
  return token;
}

function digest(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}

/**
 * True when the request carries the token, as `?token=` or `Authorization: Bearer <token>`.
 * Compared in constant time on SHA-256 digests (equal length, so `timingSafeEqual` applies and
 * the token's length does not leak).
 *
 * @example
 * hasToken(request, 'secret-token') // → false without one
 */
export function hasToken(request: IncomingMessage, token: string): boolean {
  const expected = digest(token);
  const header = request.headers.authorization;
  let given: string | undefined;
  if (typeof header === 'string' && /^Bearer\s+/i.test(header)) given = header.replace(/^Bearer\s+/i, '').trim();
  if (given === undefined) {
    const url = new URL(request.url ?? '/', 'http://localhost');
    given = url.searchParams.get('token') ?? undefined;
  }
  if (given === undefined) return false;
  return timingSafeEqual(digest(given), expected);
}

/**
 * True when the request has no `Origin` (not a browser) or its origin's host equals the
 * request's `Host` header (a page served by this server), so other sites cannot drive it.
 *
 * @example
 * originAllowed({ headers: { host: '127.0.0.1:7311', origin: 'http://evil.example' } }) // → false
 */
export function originAllowed(request: Pick<IncomingMessage, 'headers'>): boolean {
  const origin = request.headers.origin;
  if (origin === undefined) return true;
  try {
    return new URL(origin).host === request.headers.host;
  } catch {
    return false;
  }
}
