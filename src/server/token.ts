// The per-launch token: random, compared in constant time, accepted from the URL once (the
// server then sets a cookie), from the cookie, or from a header.
import { randomBytes, timingSafeEqual } from 'node:crypto';
import type { IncomingMessage } from 'node:http';
import { TOKEN_COOKIE, TOKEN_HEADER, TOKEN_QUERY } from './protocol.js';

export function newToken(): string {
  return randomBytes(24).toString('base64url');
}

export function sameToken(given: string | null | undefined, token: string): boolean {
  if (typeof given !== 'string') return false;
  const a = Buffer.from(given);
  const b = Buffer.from(token);
  return a.length === b.length && timingSafeEqual(a, b);
}

export function cookieValue(header: string | undefined, name: string): string | null {
  if (header === undefined) return null;
  for (const part of header.split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) return part.slice(eq + 1).trim();
  }
  return null;
}

export type TokenSource = 'query' | 'cookie' | 'header' | null;

/** Where a valid token came from, or null when the request has none that matches. */
export function tokenSource(req: IncomingMessage, url: URL, token: string): TokenSource {
  const header = req.headers[TOKEN_HEADER];
  if (sameToken(Array.isArray(header) ? header[0] : header, token)) return 'header';
  if (sameToken(cookieValue(req.headers.cookie, TOKEN_COOKIE), token)) return 'cookie';
  if (sameToken(url.searchParams.get(TOKEN_QUERY), token)) return 'query';
  return null;
}

export function tokenCookie(token: string): string {
  return `${TOKEN_COOKIE}=${token}; HttpOnly; SameSite=Strict; Path=/`;
}
