// The browser mode as a child process: `node scripts/serve.js` on a free port (port 0, the
// server prints the port it got) with a fresh temporary folder and workspace per test file.
import { spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PROJECT_ROOT, SERVE_SCRIPT, requireBuilt } from './paths.js';

export interface RunningServer {
  /** The page address with its launch token. */
  readonly url: string;
  readonly origin: string;
  readonly token: string;
  /** The temporary folder holding the launch workspace (and the demo once built). */
  readonly folder: string;
  readonly workspace: string;
  stop(): Promise<void>;
}

const START_TIMEOUT_MS = 60_000;

export async function startServer(): Promise<RunningServer> {
  requireBuilt();
  const folder = mkdtempSync(join(tmpdir(), 'manyfield-e2e-'));
  const workspace = join(folder, 'launch.manyfield');
  const child = spawn(process.execPath, [SERVE_SCRIPT, '--workspace', workspace, '--port', '0', '--no-open'], { cwd: PROJECT_ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
  let stderr = '';
  child.stderr?.on('data', (d: Buffer) => (stderr += d.toString()));
  const url = await new Promise<string>((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => reject(new Error(`e2e: the server printed no URL within ${START_TIMEOUT_MS} ms; stderr: ${stderr}`)), START_TIMEOUT_MS);
    child.stdout?.on('data', (d: Buffer) => {
      out += d.toString();
      const m = /Manyfield is serving at (http:\/\/127\.0\.0\.1:\d+\/\?token=[A-Za-z0-9_-]+)/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    });
    child.on('exit', (code) => {
      clearTimeout(timer);
      reject(new Error(`e2e: the server exited (code ${code}) before printing its URL; stderr: ${stderr}`));
    });
  });
  const parsed = new URL(url);
  return {
    url,
    origin: parsed.origin,
    token: parsed.searchParams.get('token') ?? '',
    folder,
    workspace,
    stop: () => stop(child, folder),
  };
}

async function stop(child: ChildProcess, folder: string): Promise<void> {
  if (child.exitCode === null) {
    const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
    child.kill('SIGTERM');
    const timer = setTimeout(() => child.kill('SIGKILL'), 5_000);
    await exited;
    clearTimeout(timer);
  }
  rmSync(folder, { recursive: true, force: true });
}

/** One handler called straight over HTTP (for checks the screens do not show, e.g. counts). */
export async function callApi<T>(server: RunningServer, name: string, args: unknown): Promise<T> {
  const res = await fetch(`${server.origin}/api/call/${name}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-manyfield-token': server.token },
    body: JSON.stringify(args),
  });
  const lines = (await res.text()).trim().split('\n');
  const last = JSON.parse(lines[lines.length - 1]) as { result: { ok: boolean; data?: T; error?: { message: string } } };
  if (!last.result.ok) throw new Error(`${name}: ${last.result.error?.message}`);
  return last.result.data as T;
}
