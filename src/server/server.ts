// The browser mode: the renderer's files and the handler map over HTTP, on 127.0.0.1 only,
// behind a random per-launch token that is checked before any routing.
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { rememberRecent } from '../api/host/recentWorkspaces.js';
import { toApiError } from '../api/errors.js';
import { folderPolicy, workspaceInFolder } from './argsPolicy.js';
import { handleCall } from './callRoute.js';
import { handleHost } from './hostRoutes.js';
import { sendJson } from './httpBodies.js';
import { CALL_PREFIX, TOKEN_QUERY, UPLOAD_PATH } from './protocol.js';
import { securityHeaders, serveStatic } from './staticFiles.js';
import { newToken, tokenCookie, tokenSource } from './token.js';
import { UploadStore } from './uploads.js';

export const LOOPBACK = '127.0.0.1';

export interface ServerOptions {
  /** The workspace the session starts on; its folder is where the page may open and create workspaces. */
  readonly workspace: string;
  /** 0 = any free port. */
  readonly port?: number;
  /** The renderer's built files (default dist/renderer/ of this project). */
  readonly rendererDir?: string;
  /** Fixed token (tests); default a fresh random one. */
  readonly token?: string;
  readonly workerFile?: string;
  /** File name of the demo workspace inside the folder. */
  readonly demoName?: string;
}

export interface RunningServer {
  readonly server: Server;
  readonly port: number;
  readonly token: string;
  /** The URL to open once: it carries the token. */
  readonly url: string;
  close(): Promise<void>;
}

const projectRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

export async function startServer(options: ServerOptions): Promise<RunningServer> {
  const token = options.token ?? newToken();
  const workspace = resolve(options.workspace);
  const folder = dirname(workspace);
  const uploads = new UploadStore();
  const policy = folderPolicy(folder, uploads);
  workspaceInFolder(folder, workspace); // the launch workspace itself must follow the rule
  const rendererDir = options.rendererDir ?? join(projectRoot, 'dist', 'renderer');
  const recentFile = join(folder, '.manyfield-recent.json');
  const remember = (path: string): void => {
    try {
      rememberRecent(recentFile, path);
    } catch {
      // A read-only folder only loses the recent list.
    }
  };
  const host = { policy, folder, workspace, recentFile, demoName: options.demoName ?? 'demo.manyfield', workerFile: options.workerFile, remember };

  const server = createServer((req, res) => {
    void respond(req, res).catch((e: unknown) => {
      if (!res.headersSent) sendJson(res, 500, { ok: false, error: toApiError(e) });
      else res.end();
    });
  });

  let port = 0;
  async function respond(req: IncomingMessage, res: ServerResponse): Promise<void> {
    securityHeaders(res);
    const url = new URL(req.url ?? '/', `http://${LOOPBACK}`);
    // The token first: nothing is routed, read or served without it.
    const source = tokenSource(req, url, token);
    if (source === null) {
      res.writeHead(401, { 'Content-Type': 'text/plain; charset=utf-8', 'Cache-Control': 'no-store' });
      res.end('401: this Manyfield session needs its launch token; open the URL the server printed\n');
      return;
    }
    // A page reached under another host name (DNS rebinding) is refused even with a token.
    const hostHeader = req.headers.host ?? '';
    if (hostHeader !== `${LOOPBACK}:${port}` && hostHeader !== `localhost:${port}`) {
      res.writeHead(403).end();
      return;
    }
    if (source === 'query') {
      res.setHeader('Set-Cookie', tokenCookie(token));
      if (req.method === 'GET' && !url.pathname.startsWith('/api/')) {
        // The token leaves the address bar (and history) at once; the cookie carries it from here on.
        url.searchParams.delete(TOKEN_QUERY);
        res.writeHead(303, { Location: `${url.pathname}${url.search}`, 'Cache-Control': 'no-store' });
        res.end();
        return;
      }
    }
    if (url.pathname.startsWith(CALL_PREFIX)) {
      await handleCall(decodeURIComponent(url.pathname.slice(CALL_PREFIX.length)), req, res, { policy, workerFile: options.workerFile, onWorkspaceUsed: remember, redact: (line) => uploads.redact(line) });
      return;
    }
    if (url.pathname === UPLOAD_PATH) {
      if (req.method !== 'POST') {
        res.writeHead(405, { Allow: 'POST' }).end();
        return;
      }
      try {
        sendJson(res, 200, { ok: true, data: await uploads.receive(req, url.searchParams.get('name') ?? 'upload') });
      } catch (e) {
        sendJson(res, 413, { ok: false, error: toApiError(e) });
      }
      return;
    }
    if (url.pathname.startsWith('/api/host/')) {
      await handleHost(url.pathname, req, res, host);
      return;
    }
    if (url.pathname.startsWith('/api/')) {
      sendJson(res, 404, { ok: false, error: { code: 'not-found', message: `nothing at ${url.pathname}` } });
      return;
    }
    if (req.method !== 'GET' && req.method !== 'HEAD') {
      res.writeHead(405, { Allow: 'GET' }).end();
      return;
    }
    serveStatic(rendererDir, url.pathname, res);
  }

  await new Promise<void>((resolveListen, reject) => {
    server.once('error', reject);
    server.listen(options.port ?? 0, LOOPBACK, () => resolveListen());
  });
  port = (server.address() as AddressInfo).port;
  remember(workspace);
  return {
    server,
    port,
    token,
    url: `http://${LOOPBACK}:${port}/?${TOKEN_QUERY}=${token}`,
    close: () =>
      new Promise<void>((done) => {
        server.closeAllConnections();
        server.close(() => {
          uploads.dispose();
          done();
        });
      }),
  };
}
