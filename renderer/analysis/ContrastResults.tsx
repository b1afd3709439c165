// The results of one contrast: the forest plot with its sort, grouping, hover and click, the
// pooled summary and heterogeneity beside it, then the two approaches, shrinkage,
// meta-regression and sensitivity.
import { useEffect, useMemo, useState } from 'react';
import type { ResultView } from '../shape/resultView.js';
import { arrangeForest, FOREST_CSV, forestRows, leftOutEntries, type ForestGroup, type ForestRow, type ForestSort } from '../shape/forest.js';
import { toCsv } from '../shape/csv.js';
import { decimalsFor, formatNumber } from '../shape/format.js';
import { ChartFrame } from '../charts/ChartFrame.js';
import { ForestChart, VIRTUAL_FROM } from './ForestChart.js';
import { ForestChart as SharedForestChart } from '../charts/shared/index.js';
import { HeterogeneityPanel, PooledSummary } from './PooledPanels.js';
import { MetaRegressionPanel, SensitivityPanel, ShrinkagePlot, StageComparison } from './DeeperPanels.js';

interface Props {
  readonly view: ResultView;
  readonly contrast: string;
  readonly covariates: ReadonlyMap<string, Record<string, number | string | null>>;
  readonly onOpenTrial: (trial: string) => void;
}

export function ContrastResults({ view, contrast, covariates, onOpenTrial }: Props) {
  const pooled = view.pooled.find((p) => p.name === contrast);
  const [sort, setSort] = useState<ForestSort>('input');
  const [group, setGroup] = useState<ForestGroup>('none');
  const [hover, setHover] = useState<ForestRow | null>(null);
  const rows = useMemo(() => forestRows(view.trials, contrast, pooled ? { trial: pooled.weights.trial, share: pooled.weights.share } : null), [view.trials, contrast, pooled]);
  const groups = useMemo(() => arrangeForest(rows, sort, group), [rows, sort, group]);
  // The panels below the forest plot are drawn after it has been painted, so a large analysis
  // shows its forest plot first and the window never waits on all panels at once.
  const [details, setDetails] = useState(false);
  // After the browser has painted the plot: the mark `npm run bench:screens` measures to.
  useEffect(() => {
    let timer: ReturnType<typeof setTimeout> | undefined;
    const frame = requestAnimationFrame(() => {
      timer = setTimeout(() => {
        performance.clearMarks('manyfield:forest-drawn');
        performance.mark('manyfield:forest-drawn');
        setDetails(true);
      }, 0);
    });
    return () => {
      cancelAnimationFrame(frame);
      if (timer) clearTimeout(timer);
    };
  }, [view, contrast]);
  useEffect(() => {
    if (!details) return;
    const frame = requestAnimationFrame(() => setTimeout(() => performance.mark('manyfield:panels-drawn'), 0));
    return () => cancelAnimationFrame(frame);
  }, [details]);
  const unit = view.contrastUnits[contrast] ?? view.unit ?? 'units';
  const decimals = decimalsFor(pooled?.se ?? (rows[0]?.se || 1));
  if (!pooled) return <p className="muted">Contrast {contrast} was not pooled (pooling is off in the spec).</p>;
  const leftOut = leftOutEntries(pooled.leftOut);
  const fmt = (v: number | null) => formatNumber(v, decimals);
  const sorted = groups.flatMap((g) => g.rows);
  return (
    <div className="contrast-results">
      <div className="forest-layout">
        <ChartFrame
          title={`Forest plot: ${contrast}`}
          csv={() => toCsv(FOREST_CSV, sorted)}
          testId="forest-frame"
          note={`${rows.length} trials with this contrast. Squares: each trial's estimate (area ∝ its weight in the pool), lines: its ${Math.round(view.settings.confidence * 100)}% interval. Diamond: the pooled estimate; dashed bar: where the effect at a new site is expected. Click a trial to open it.`}
        >
          <div className="forest-controls" role="group" aria-label="Arrange the forest plot">
            <label>
              Sort by{' '}
              <select value={sort} onChange={(e) => setSort(e.target.value as ForestSort)} aria-label="Sort trials by">
                <option value="input">report order</option>
                <option value="estimate">estimate</option>
                <option value="site">site</option>
                <option value="year">year</option>
                <option value="weight">weight</option>
              </select>
            </label>
            <label>
              Group by{' '}
              <select value={group} onChange={(e) => setGroup(e.target.value as ForestGroup)} aria-label="Group trials by">
                <option value="none">no grouping</option>
                <option value="site">site</option>
                <option value="year">year</option>
              </select>
            </label>
            <span className="forest-hover" data-testid="forest-hover" aria-live="polite">
              {hover
                ? `${hover.trial}${hover.site ? ` (site ${hover.site}, ${hover.year ?? ''})` : ''}: ${fmt(hover.estimate)} ${unit}, SE ${fmt(hover.se)}, interval ${fmt(hover.lower)} to ${fmt(hover.upper)}, df ${hover.df ?? '–'}, weight ${hover.weightShare === null ? '–' : `${(hover.weightShare * 100).toFixed(1)}%`}`
                : 'Point at a trial to see its numbers.'}
            </span>
          </div>
          {rows.length <= VIRTUAL_FROM && group === 'none' ? (
            // the chart the report draws too (renderer/charts/shared)
            <SharedForestChart
              rows={sorted.map((r) => ({ trial: r.trial, site: r.site ?? '', year: r.year ?? '', estimate: r.estimate, lower: r.lower, upper: r.upper, weightShare: r.weightShare ?? 0 }))}
              pooled={pooled.estimate !== null && pooled.lower !== null && pooled.upper !== null ? { estimate: pooled.estimate, lower: pooled.lower, upper: pooled.upper } : null}
              prediction={pooled.predictionLower !== null && pooled.predictionUpper !== null ? { lower: pooled.predictionLower, upper: pooled.predictionUpper } : null}
              threshold={view.settings.threshold}
              unit={unit}
              width={740}
              decimals={decimals}
              title={`Forest plot of ${contrast}`}
              onRowHover={(r, i) => setHover(r ? sorted[i] : null)}
              onRowClick={(_r, i) => onOpenTrial(sorted[i].trial)}
            />
          ) : (
            // grouped (headings between groups) or long (only the rows in view are drawn)
            <ForestChart
              groups={groups}
              pooled={pooled}
              prediction={{ lower: pooled.predictionLower, upper: pooled.predictionUpper }}
              threshold={view.settings.threshold}
              unit={unit}
              width={740}
              decimals={decimals}
              onRowHover={setHover}
              onRowClick={(r) => onOpenTrial(r.trial)}
            />
          )}
        </ChartFrame>
        <div className="side-panels">
          <PooledSummary pooled={pooled} unit={unit} threshold={view.settings.threshold} decimals={decimals} confidence={view.settings.confidence} />
          <HeterogeneityPanel pooled={pooled} unit={unit} threshold={view.settings.threshold} decimals={decimals} confidence={view.settings.confidence} />
        </div>
      </div>
      {leftOut.length > 0 ? (
        <section className="panel" data-testid="left-out">
          <h3>Trials left out of this contrast ({leftOut.length})</h3>
          <ul className="small-text">
            {leftOut.map((l, i) => (
              <li key={i}>
                {l.trial ? <strong>{l.trial}: </strong> : null}
                {l.reason}
              </li>
            ))}
          </ul>
        </section>
      ) : (
        <p className="small-text muted" data-testid="left-out">
          No trial was left out of this contrast.
        </p>
      )}
      {details ? (
        <>
          <h2>One-stage and two-stage</h2>
          <div className="panel-row">
            <StageComparison agreement={view.agreement.find((a) => a.name === contrast) ?? null} decimals={decimals} />
            <ShrinkagePlot oneStage={view.oneStage} contrast={contrast} unit={unit} />
          </div>
          <h2>What explains the differences (meta-regression)</h2>
          <MetaRegressionPanel pooled={pooled} rows={rows} covariates={covariates} unit={unit} />
          <h2>How robust is the answer (sensitivity)</h2>
          <SensitivityPanel pooled={pooled} unit={unit} />
        </>
      ) : (
        <p className="status" role="status">
          Drawing the other panels…
        </p>
      )}
    </div>
  );
}
