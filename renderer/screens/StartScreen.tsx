// Start: open the demo, a recent workspace, a workspace by path, or make a new one.
import { useState, type FormEvent } from 'react';
import { useHost } from '../app/hostContext.js';
import { useLoad } from '../app/useLoad.js';
import type { RecentWorkspace, Result } from '../host/types.js';

interface Props {
  readonly onOpen: (path: string) => Promise<void>;
  readonly current: string | null;
}

export function StartScreen({ onOpen, current }: Props) {
  const host = useHost();
  const [busy, setBusy] = useState<string | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [newName, setNewName] = useState('');
  const [openPath, setOpenPath] = useState('');
  const [recent] = useLoad<{ recent: RecentWorkspace[]; launch: string | null }>(async (): Promise<Result<{ recent: RecentWorkspace[]; launch: string | null }>> => {
    const [recentList, launch] = await Promise.all([host.recentWorkspaces().catch(() => []), host.launchWorkspace().catch(() => null)]);
    return { ok: true, data: { recent: recentList, launch } };
  }, [host]);

  const attempt = async (what: string, action: () => Promise<void>) => {
    setBusy(what);
    setError(null);
    try {
      await action();
    } catch (e) {
      setError(`${what} failed: ${e instanceof Error ? e.message : String(e)}`);
    } finally {
      setBusy(null);
    }
  };

  const openDemo = () => attempt('Opening the demo', async () => onOpen(await host.demoWorkspace()));
  const createNew = (e: FormEvent) => {
    e.preventDefault();
    return attempt('Creating the workspace', async () => {
      const path = await host.pickWorkspace('new', newName);
      if (!path) return;
      // The browser mode's server makes the empty file itself; a desktop dialog only names it.
      const exists = await host.call('workspace.describe', { workspace: path });
      if (!exists.ok) {
        const made = await host.call('workspace.create', { workspace: path });
        if (!made.ok) throw new Error(made.error.message);
      }
      await onOpen(path);
    });
  };
  const openByPath = (e: FormEvent) => {
    e.preventDefault();
    return attempt('Opening the workspace', async () => {
      const path = await host.pickWorkspace('open', openPath);
      if (path) await onOpen(path);
    });
  };

  const listed = recent.status === 'ready' ? mergeLaunch(recent.data.recent, recent.data.launch) : [];

  return (
    <section className="start" data-testid="start-screen" aria-labelledby="start-title">
      <h1 id="start-title">Start</h1>
      <p className="lead">Manyfield keeps a network of crop trials in one workspace file: sites, trials, plots and their measurements, ready for per-trial analysis and pooling across sites and years.</p>
      <div className="start-grid">
        <div className="card">
          <h2>Try the demo network</h2>
          <p>An invented nitrogen rate × timing network: 14 sites over three years, 42 trials. Build it once and explore every screen.</p>
          <button type="button" className="primary" data-testid="open-demo" onClick={openDemo} disabled={busy !== null}>
            Open the demo network
          </button>
        </div>
        <div className="card">
          <h2>Recent workspaces</h2>
          {recent.status === 'loading' ? <p className="status">Loading…</p> : null}
          <ul className="recent-list" data-testid="recent-list">
            {listed.length === 0 && recent.status !== 'loading' ? <li className="muted">None yet.</li> : null}
            {listed.map((w) => (
              <li key={w.path}>
                <button type="button" className="link" onClick={() => attempt('Opening the workspace', () => onOpen(w.path))} disabled={busy !== null}>
                  {w.name}
                </button>
                <span className="muted path">{w.path}</span>
                {w.path === current ? <span className="tag">open</span> : null}
              </li>
            ))}
          </ul>
        </div>
        <form className="card" onSubmit={createNew}>
          <h2>New workspace</h2>
          {host.choosesFilesInPage ? (
            <>
              <label htmlFor="new-name">Name (the file is made beside the launch workspace)</label>
              <input id="new-name" value={newName} onChange={(e) => setNewName(e.target.value)} placeholder="e.g. potassium-network" />
            </>
          ) : (
            <p>Choose where to keep the new workspace file.</p>
          )}
          <button type="submit" disabled={busy !== null || (host.choosesFilesInPage && !newName.trim())}>
            {host.choosesFilesInPage ? 'Create' : 'Create…'}
          </button>
        </form>
        <form className="card" onSubmit={openByPath}>
          <h2>Open a workspace</h2>
          {host.choosesFilesInPage ? (
            <>
              <label htmlFor="open-path">Path of the workspace file</label>
              <input id="open-path" value={openPath} onChange={(e) => setOpenPath(e.target.value)} placeholder="/path/to/network.manyfield" />
            </>
          ) : (
            <p>Choose a workspace file (.manyfield).</p>
          )}
          <button type="submit" disabled={busy !== null || (host.choosesFilesInPage && !openPath.trim())}>
            {host.choosesFilesInPage ? 'Open' : 'Open…'}
          </button>
        </form>
      </div>
      {busy ? (
        <p className="status" role="status">
          {busy}…
        </p>
      ) : null}
      {error ? (
        <p className="status status-error" role="alert">
          {error}
        </p>
      ) : null}
    </section>
  );
}

function mergeLaunch(recent: RecentWorkspace[], launch: string | null): RecentWorkspace[] {
  if (!launch || recent.some((r) => r.path === launch)) return recent;
  const name = launch.split(/[\\/]/).pop()?.replace(/\.manyfield$/, '') ?? launch;
  return [{ path: launch, name, openedAt: '' }, ...recent];
}
