// The renderer's built files (dist/renderer/), or a short page saying it is not built yet.
// Every page carries a strict Content-Security-Policy: this origin only, no eval, no frames.
import { existsSync, readFileSync, statSync } from 'node:fs';
import type { ServerResponse } from 'node:http';
import { extname, join, relative, resolve } from 'node:path';

export const CONTENT_SECURITY_POLICY = [
  "default-src 'self'",
  "script-src 'self'",
  // React and the chart library set style attributes; no remote style sheets.
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "font-src 'self'",
  "connect-src 'self'",
  "object-src 'none'",
  "base-uri 'none'",
  "form-action 'none'",
  "frame-ancestors 'none'",
].join('; ');

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.mjs': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.woff2': 'font/woff2',
  '.map': 'application/json; charset=utf-8',
};

export const PLACEHOLDER_PAGE = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Manyfield</title></head>
<body><h1>Manyfield</h1><p>The renderer is not built yet. Run <code>npm run build:renderer</code> and reload this page.
The handler map is already served under <code>/api/</code>.</p></body></html>
`;

export function securityHeaders(res: ServerResponse): void {
  res.setHeader('Content-Security-Policy', CONTENT_SECURITY_POLICY);
  res.setHeader('X-Content-Type-Options', 'nosniff');
  res.setHeader('Referrer-Policy', 'no-referrer');
  res.setHeader('Cross-Origin-Opener-Policy', 'same-origin');
  res.setHeader('Cross-Origin-Resource-Policy', 'same-origin');
}

/** Serves a file under `root`; paths that are not files fall back to index.html (the app routes itself). */
export function serveStatic(root: string, pathname: string, res: ServerResponse): void {
  const base = resolve(root);
  const index = join(base, 'index.html');
  if (!existsSync(index)) {
    res.writeHead(200, { 'Content-Type': TYPES['.html'], 'Cache-Control': 'no-store' });
    res.end(PLACEHOLDER_PAGE);
    return;
  }
  let target: string;
  try {
    target = resolve(base, `.${decodeURIComponent(pathname)}`);
  } catch {
    res.writeHead(400).end();
    return;
  }
  const rel = relative(base, target);
  if (rel.startsWith('..') || rel.includes('\0')) {
    res.writeHead(404).end();
    return;
  }
  const file = existsSync(target) && statSync(target).isFile() ? target : index;
  res.writeHead(200, { 'Content-Type': TYPES[extname(file)] ?? 'application/octet-stream', 'Cache-Control': file === index ? 'no-store' : 'max-age=3600' });
  res.end(readFileSync(file));
}
