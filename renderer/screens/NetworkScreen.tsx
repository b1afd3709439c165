// Network: the sites on a plane, the workspace's totals, and every trial by site and year.
import { useMemo, useState } from 'react';
import type { OpenWorkspace } from '../app/App.js';
import { useHost } from '../app/hostContext.js';
import { useLoad } from '../app/useLoad.js';
import { SiteMap } from '../network/SiteMap.js';
import { TrialTable } from '../network/TrialTable.js';
import { WhenLoaded } from '../ui/Status.js';
import { flagCounts, sortTrials } from '../shape/trialTable.js';
import { TraitPicker } from '../ui/TraitPicker.js';
import { progressText } from '../shape/progress.js';
import type { ProgressEvent } from '../host/types.js';
import { SiteYearMatrix } from '../network/SiteYearMatrix.js';
import { NetworkChecks } from '../network/NetworkChecks.js';

interface Props {
  readonly workspace: OpenWorkspace;
  readonly trait: string;
  readonly onTrait: (t: string) => void;
  readonly onOpenTrial: (id: number) => void;
}

export function NetworkScreen({ workspace, trait, onTrait, onOpenTrial }: Props) {
  const host = useHost();
  const path = workspace.path;
  const info = workspace.info;
  const [sites] = useLoad(() => host.call('sites.list', { workspace: path }), [host, path, info]);
  const [progress, setProgress] = useState<ProgressEvent | null>(null);
  const [trials] = useLoad(
    (signal) => (trait ? host.call('trials.overview', { workspace: path, trait }, { signal, onProgress: setProgress }) : Promise.resolve({ ok: true as const, data: [] })),
    [host, path, trait, info],
  );
  const [checks] = useLoad(() => (trait ? host.call('trials.checks', { workspace: path, trait }) : Promise.resolve({ ok: false as const, error: { code: 'not-found', message: 'no trait chosen' } })), [host, path, trait, info]);
  const [site, setSite] = useState<number | null>(null);
  const siteCode = sites.status === 'ready' ? (sites.data.find((s) => s.id === site)?.code ?? null) : null;
  const rows = useMemo(() => (trials.status === 'ready' ? sortTrials(trials.data, siteCode) : []), [trials, siteCode]);
  const unit = info.traits.find((t) => t.name === trait)?.unit ?? null;
  const years = info.years.length > 0 ? `${info.years[0]}–${info.years[info.years.length - 1]}` : 'no years yet';

  return (
    <section className="network" data-testid="network-screen" aria-labelledby="network-title">
      <div className="screen-head">
        <h1 id="network-title">{info.name}</h1>
        <TraitPicker traits={info.traits} value={trait} onChange={onTrait} />
      </div>
      <p className="facts">
        <span>
          <strong>{info.counts.sites}</strong> {info.counts.sites === 1 ? 'site' : 'sites'}
        </span>
        <span>
          <strong>{info.counts.trials}</strong> {info.counts.trials === 1 ? 'trial' : 'trials'}
        </span>
        <span>
          <strong>{info.counts.plots.toLocaleString('en-GB')}</strong> {info.counts.plots === 1 ? 'plot' : 'plots'}
        </span>
        <span>{years}</span>
        <span>
          <strong>{info.exclusions}</strong> {info.exclusions === 1 ? 'plot' : 'plots'} excluded
        </span>
      </p>
      <div className="network-grid">
        <WhenLoaded state={sites} what="sites">
          {(list) => <SiteMap sites={list} selected={site} onSelect={setSite} />}
        </WhenLoaded>
        <div className="network-matrix">
          {trials.status === 'ready' && trials.data.length > 0 ? <SiteYearMatrix trials={trials.data} onOpen={onOpenTrial} /> : null}
        </div>
        <div className="network-side">
          <h2>Protocol</h2>
          {info.protocols.length === 0 ? <p className="muted">No trials imported yet. Use Intake to add a file.</p> : null}
          {info.protocols.map((p) => (
            <div key={p.name} className="protocol">
              <p>
                <strong>{p.name}</strong>
                {p.control ? <> · control {p.control}</> : null}
              </p>
              <p className="muted">
                {p.treatments.length} treatments; factors: {p.factors.map((f) => `${f.name}${f.unit ? ` (${f.unit})` : ''}`).join(', ') || 'none'}
              </p>
            </div>
          ))}
          {trials.status === 'ready' && trials.data.length > 0 ? (
            <>
              <h2>Data-quality flags</h2>
              <ul className="flag-summary">
                {flagCounts(trials.data).map((f) => (
                  <li key={f.code}>
                    <span className={`flag flag-${f.code}`}>{f.word}</span> in {f.trials} {f.trials === 1 ? 'trial' : 'trials'}
                  </li>
                ))}
                {flagCounts(trials.data).length === 0 ? <li className="muted">No trial is flagged.</li> : null}
              </ul>
            </>
          ) : null}
          {checks.status === 'ready' && checks.data.trials > 0 ? (
            <>
              <h2>Network checks</h2>
              <NetworkChecks checks={checks.data} />
            </>
          ) : null}
        </div>
      </div>
      <div className="table-head">
        <h2 id="trials-title">
          Trials{siteCode ? ` at ${siteCode}` : ''} <span className="count">({rows.length})</span>
        </h2>
        {site !== null ? (
          <button type="button" className="small" onClick={() => setSite(null)}>
            Show all sites
          </button>
        ) : null}
      </div>
      <WhenLoaded state={trials} what={progress ? `trials (${progressText(progress.stage, progress.fraction)})` : 'trials'}>
        {() => <TrialTable rows={rows} unit={unit} onOpen={onOpenTrial} />}
      </WhenLoaded>
    </section>
  );
}
