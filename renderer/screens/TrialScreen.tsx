// Trial: the field layout with each plot's record (and exclusion), the ANOVA, adjusted means,
// contrasts, and the residual checks.
import { useMemo, useState } from 'react';
import type { OpenWorkspace } from '../app/App.js';
import { useHost } from '../app/hostContext.js';
import { useLoad } from '../app/useLoad.js';
import type { TrialAnalysis, TrialDetail } from '../app/views.js';
import type { GridColouring } from '../shape/fieldGrid.js';
import { meanRows, notEstimable } from '../shape/means.js';
import { FlagList } from '../trial/FlagList.js';
import { WhenLoaded } from '../ui/Status.js';
import { TraitPicker } from '../ui/TraitPicker.js';
import { FieldGrid } from '../trial/FieldGrid.js';
import { PlotRecord } from '../trial/PlotRecord.js';
import { AnovaTable, ContrastsTable, MeansTable } from '../trial/AnalysisTables.js';
import { MeansChart } from '../trial/MeansChart.js';
import { Diagnostics } from '../trial/Diagnostics.js';
import { ExclusionsList } from '../trial/ExclusionsList.js';

interface Props {
  readonly workspace: OpenWorkspace;
  readonly trial: number;
  readonly trait: string;
  readonly onTrait: (t: string) => void;
  readonly onBack: () => void;
  readonly onChanged: () => Promise<unknown>;
}

export function TrialScreen({ workspace, trial, trait, onTrait, onBack, onChanged }: Props) {
  const host = useHost();
  const path = workspace.path;
  const [detail, reloadDetail] = useLoad(() => host.call('trial.detail', { workspace: path, trial, trait }), [host, path, trial, trait]);
  const [exclusions, reloadExclusions] = useLoad(() => host.call('exclusions.list', { workspace: path }), [host, path]);
  const [selected, setSelected] = useState<number | null>(null);
  const [colouring, setColouring] = useState<GridColouring>('value');

  const afterChange = async () => {
    reloadDetail();
    reloadExclusions();
    await onChanged();
  };
  const exclude = async (plot: number, reason: string) => {
    const r = await host.call('plots.exclude', { workspace: path, plot, reason });
    if (!r.ok) return r.error.message;
    await afterChange();
    return null;
  };
  const include = async (plot: number) => {
    const r = await host.call('plots.include', { workspace: path, plot });
    if (!r.ok) return r.error.message;
    await afterChange();
    return null;
  };

  return (
    <section className="trial" data-testid="trial-screen" aria-labelledby="trial-title">
      <WhenLoaded state={detail} what="the trial">
        {(d) => (
          <TrialBody
            d={d}
            workspace={workspace}
            trait={trait}
            onTrait={onTrait}
            onBack={onBack}
            selected={selected}
            onSelect={setSelected}
            colouring={colouring}
            onColouring={setColouring}
            exclude={exclude}
            include={include}
            exclusions={exclusions.status === 'ready' ? exclusions.data : []}
          />
        )}
      </WhenLoaded>
    </section>
  );
}

interface BodyProps {
  readonly d: TrialDetail;
  readonly workspace: OpenWorkspace;
  readonly trait: string;
  readonly onTrait: (t: string) => void;
  readonly onBack: () => void;
  readonly selected: number | null;
  readonly onSelect: (p: number | null) => void;
  readonly colouring: GridColouring;
  readonly onColouring: (c: GridColouring) => void;
  readonly exclude: (plot: number, reason: string) => Promise<string | null>;
  readonly include: (plot: number) => Promise<string | null>;
  readonly exclusions: Parameters<typeof ExclusionsList>[0]['entries'];
}

function TrialBody({ d, workspace, trait, onTrait, onBack, selected, onSelect, colouring, onColouring, exclude, include, exclusions }: BodyProps) {
  const labels = useMemo(() => new Map(d.treatments.map((t) => [t.code, t.label])), [d.treatments]);
  const a = d.analysis;
  const plot = d.plots.find((p) => p.id === selected) ?? null;
  const t = d.trial;
  const title = `${t.label}`;
  const excludedHere = d.plots.filter((p) => p.excluded).length;
  return (
    <>
      <div className="screen-head">
        <div>
          <button type="button" className="link back" onClick={onBack}>
            ← All trials
          </button>
          <h1 id="trial-title">
            Trial {t.label}
            <span className="subtitle">
              {' '}
              · site {t.site} · {t.year} · {t.design.replace(/-/g, ' ')}
              {t.crop ? ` · ${t.crop}` : ''}
            </span>
          </h1>
        </div>
        <TraitPicker traits={workspace.info.traits} value={trait} onChange={onTrait} />
      </div>
      <p className="facts">
        <span>
          <strong>{d.plots.length}</strong> plots
        </span>
        <span>
          <strong>{excludedHere}</strong> excluded
        </span>
        <span>
          <strong>{d.treatments.length}</strong> treatments{d.control ? `, control ${d.control}` : ''}
        </span>
        {a ? (
          <span>
            CV <strong>{a.anova.cv === null ? '–' : a.anova.cv.toFixed(1)}</strong> %
          </span>
        ) : null}
      </p>
      {a ? <FlagList flags={a.flags} /> : null}
      {d.analysisError ? (
        <p className="banner banner-warn" role="alert">
          This trial could not be analysed: {d.analysisError}
        </p>
      ) : null}

      <div className="layout-row">
        <div className="main-column">
          <FieldGrid plots={d.plots} colouring={colouring} onColouring={onColouring} selected={selected} onSelect={onSelect} unit={d.unit} title="Field layout" exportName={`Field layout — ${t.label}`} />
          <section aria-labelledby="excl-title" className="panel">
            <h3 id="excl-title">Excluded plots</h3>
            <ExclusionsList entries={exclusions} trial={t.id} onShowPlot={onSelect} />
          </section>
        </div>
        <div className="side-column">
          <PlotRecord plot={plot} unit={d.unit} treatmentLabel={(c) => labels.get(c) ?? c} onExclude={exclude} onInclude={include} />
        </div>
      </div>

      {a ? (
        <>
          <h2 id="trial-analysis-title">Analysis of the trial</h2>
          <div className="tables-row">
            <AnovaTable anova={a.anova} unit={d.unit} />
            <ContrastsTable contrasts={a.contrasts} unit={d.unit} />
          </div>
          <div className="tables-row">
            <MeansChart rows={meanRows(a.means, labels, d.control)} unit={d.unit} title="Adjusted means" exportName={`Adjusted means — ${t.label}`} missing={notEstimable(a.means)} />
            <MeansTable means={a.means} labels={labels} unit={d.unit} confidence={confidenceOf(a)} />
          </div>
          <h2>Residual checks</h2>
          <Diagnostics plots={d.plots} analysis={a} unit={d.unit} trialLabel={t.label} />
        </>
      ) : null}
    </>
  );
}

/** The interval level the trial stage used (read from an estimable contrast; 95 % otherwise). */
function confidenceOf(a: TrialAnalysis): number {
  for (const c of a.contrasts) if (c.estimable) return c.confidence;
  return 0.95;
}
