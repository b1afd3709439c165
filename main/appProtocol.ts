// app://manyfield/<path>: the renderer's built files from dist/renderer/ (or the placeholder
// page), each answer carrying the strict Content-Security-Policy. Pure: the main process wraps
// the answer in a Response.
import { existsSync, readFileSync, statSync } from 'node:fs';
import { extname, join, relative, resolve } from 'node:path';
import { CONTENT_SECURITY_POLICY, PLACEHOLDER_PAGE } from '../src/server/staticFiles.js';
import { APP_ORIGIN } from './windowOptions.js';

export interface AppFile {
  readonly status: number;
  readonly headers: Record<string, string>;
  readonly body: Uint8Array | string;
}

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.woff2': 'font/woff2',
};

export function appFile(rendererDir: string, url: string): AppFile {
  const headers = { 'Content-Security-Policy': CONTENT_SECURITY_POLICY, 'X-Content-Type-Options': 'nosniff' };
  if (!url.startsWith(`${APP_ORIGIN}/`)) return { status: 404, headers, body: '' };
  const base = resolve(rendererDir);
  const index = join(base, 'index.html');
  if (!existsSync(index)) return { status: 200, headers: { ...headers, 'Content-Type': TYPES['.html'] }, body: PLACEHOLDER_PAGE };
  let pathname: string;
  try {
    pathname = decodeURIComponent(new URL(url).pathname);
  } catch {
    return { status: 400, headers, body: '' };
  }
  const target = resolve(base, `.${pathname}`);
  const rel = relative(base, target);
  if (rel.startsWith('..') || rel.includes('\0')) return { status: 404, headers, body: '' };
  const file = existsSync(target) && statSync(target).isFile() ? target : index;
  return { status: 200, headers: { ...headers, 'Content-Type': TYPES[extname(file)] ?? 'application/octet-stream' }, body: readFileSync(file) };
}
