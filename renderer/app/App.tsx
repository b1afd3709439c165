// The app frame: a top bar naming the open workspace, the screen switcher, and the screen.
import { useCallback, useEffect, useState } from 'react';
import { useHost } from './hostContext.js';
import type { WorkspaceInfo } from './views.js';
import { StartScreen } from '../screens/StartScreen.js';
import { NetworkScreen } from '../screens/NetworkScreen.js';
import { IntakeScreen } from '../screens/IntakeScreen.js';
import { TrialScreen } from '../screens/TrialScreen.js';
import { AnalysisScreen, newAnalysisMemory } from '../screens/AnalysisScreen.js';

export type Route =
  | { readonly screen: 'start' }
  | { readonly screen: 'network' }
  | { readonly screen: 'intake' }
  | { readonly screen: 'analysis' }
  | { readonly screen: 'trial'; readonly trial: number; readonly from?: 'network' | 'analysis' };

export interface OpenWorkspace {
  readonly path: string;
  readonly info: WorkspaceInfo;
}

/** Yield when the workspace has it (the trait most trials are run for), else the first. */
function defaultTrait(names: readonly string[]): string {
  return names.find((n) => n.toLowerCase() === 'yield') ?? names.find((n) => /yield/i.test(n)) ?? names[0] ?? '';
}

export function App() {
  const host = useHost();
  const [route, setRoute] = useState<Route>({ screen: 'start' });
  const [workspace, setWorkspace] = useState<OpenWorkspace | null>(null);
  const [trait, setTrait] = useState<string>('');
  const [problem, setProblem] = useState<string | null>(null);
  // The analysis screen's builder and results survive a visit to another screen.
  const [analysisMemory, setAnalysisMemory] = useState(newAnalysisMemory);

  /** Reads the workspace description again (after an import or an exclusion). */
  const refresh = useCallback(
    async (path: string): Promise<boolean> => {
      const r = await host.call('workspace.describe', { workspace: path });
      if (!r.ok) {
        setProblem(`Could not open ${path}: ${r.error.message}`);
        return false;
      }
      setProblem(null);
      setWorkspace((w) => {
        if (w?.path !== path) setAnalysisMemory(newAnalysisMemory());
        return { path, info: r.data };
      });
      setTrait((t) => (r.data.traits.some((x) => x.name === t) ? t : defaultTrait(r.data.traits.map((x) => x.name))));
      return true;
    },
    [host],
  );

  const open = useCallback(
    async (path: string) => {
      if (await refresh(path)) setRoute({ screen: 'network' });
    },
    [refresh],
  );

  // The desktop menu's commands (open, new, demo, import) act like the start screen's buttons.
  useEffect(
    () =>
      host.onMenu?.((c) => {
        if (c.command === 'import-data') setRoute({ screen: 'intake' });
        else if (c.command === 'new-workspace')
          void host.call('workspace.create', { workspace: c.path }).then((r) => (r.ok ? open(c.path) : setProblem(r.error.message)));
        else void open(c.path);
      }),
    [host, open],
  );

  useEffect(() => {
    document.title = workspace ? `${workspace.info.name} — Manyfield` : 'Manyfield';
  }, [workspace]);

  const nav = (target: Route, label: string, needsWorkspace: boolean) => (
    <button
      type="button"
      className={`nav-item ${route.screen === target.screen ? 'current' : ''}`}
      aria-current={route.screen === target.screen ? 'page' : undefined}
      disabled={needsWorkspace && !workspace}
      onClick={() => setRoute(target)}
    >
      {label}
    </button>
  );

  return (
    <div className="app">
      <header className="topbar">
        <span className="brand">Manyfield</span>
        <nav aria-label="Screens" className="nav">
          {nav({ screen: 'start' }, 'Start', false)}
          {nav({ screen: 'network' }, 'Network', true)}
          {nav({ screen: 'intake' }, 'Intake', true)}
          {nav({ screen: 'analysis' }, 'Analysis', true)}
        </nav>
        <span className="topbar-workspace" title={workspace?.path}>
          {workspace ? workspace.info.name : 'No workspace open'}
        </span>
      </header>
      {problem ? (
        <p className="banner banner-error" role="alert">
          {problem}
        </p>
      ) : null}
      <main className="screen">
        {route.screen === 'start' || !workspace ? (
          <StartScreen onOpen={open} current={workspace?.path ?? null} />
        ) : route.screen === 'network' ? (
          <NetworkScreen workspace={workspace} trait={trait} onTrait={setTrait} onOpenTrial={(id) => setRoute({ screen: 'trial', trial: id })} />
        ) : route.screen === 'intake' ? (
          <IntakeScreen workspace={workspace} onImported={() => refresh(workspace.path)} onShowNetwork={() => setRoute({ screen: 'network' })} />
        ) : route.screen === 'analysis' ? (
          <AnalysisScreen
            workspace={workspace}
            trait={trait}
            memory={analysisMemory}
            onOpenTrial={async (label) => {
              const r = await host.call('trials.overview', { workspace: workspace.path, trait });
              const found = r.ok ? r.data.find((t) => t.label === label) : undefined;
              if (found) setRoute({ screen: 'trial', trial: found.id, from: 'analysis' });
              else setProblem(`Trial ${label} is not in this workspace any more.`);
            }}
          />
        ) : (
          <TrialScreen
            workspace={workspace}
            trial={route.trial}
            trait={trait}
            onTrait={setTrait}
            onBack={() => setRoute({ screen: route.from ?? 'network' })}
            onChanged={() => refresh(workspace.path)}
          />
        )}
      </main>
    </div>
  );
}
