// One-stage against two-stage, shrinkage (each trial's own estimate against its BLUP),
// meta-regression (bubble plot and subgroups) and sensitivity (leave-one-out, cumulative by year).
import { rowsFromColumnsView } from '../shape/columns.js';
import type { CompactPooledEntry, OneStageResult, StageAgreement } from '../shape/resultView.js';
import { formatNumber, formatP } from '../shape/format.js';
import { toCsv } from '../shape/csv.js';
import { ChartFrame } from '../charts/ChartFrame.js';
import { ScatterChart, type ScatterPoint } from './ScatterChart.js';
import type { ForestRow } from '../shape/forest.js';

export function StageComparison({ agreement, decimals }: { agreement: StageAgreement | null; decimals: number }) {
  if (!agreement) return <p className="muted">The one-stage model was not fitted for this contrast.</p>;
  const fmt = (v: number | null) => formatNumber(v, decimals);
  return (
    <section className="panel" data-testid="stage-comparison" aria-label="One-stage against two-stage">
      <h3>Two ways to pool, side by side</h3>
      <table className="data">
        <thead>
          <tr>
            <th>Approach</th>
            <th>Estimate</th>
            <th>SE</th>
          </tr>
        </thead>
        <tbody>
          <tr>
            <td>One-stage mixed model (all plots at once)</td>
            <td>{fmt(agreement.oneStage)}</td>
            <td>{fmt(agreement.oneStageSe)}</td>
          </tr>
          <tr>
            <td>Two-stage (trial estimates pooled)</td>
            <td>{fmt(agreement.twoStage)}</td>
            <td>{fmt(agreement.twoStageSe)}</td>
          </tr>
        </tbody>
      </table>
      <p data-testid="stage-agreement">
        {agreement.agree === null ? 'Agreement cannot be judged.' : agreement.agree ? '✓ They agree' : '⚠ They differ'}
        {agreement.differenceInSe === null ? '' : ` (gap ${formatNumber(agreement.differenceInSe, 2)} standard errors; more than 0.5 is worth a look).`}
      </p>
      {agreement.note ? (
        <p className="small-text muted" data-testid="stage-note">
          {agreement.note}
        </p>
      ) : null}
    </section>
  );
}

export function ShrinkagePlot({ oneStage, contrast, unit }: { oneStage: OneStageResult | null; contrast: string; unit: string }) {
  if (!oneStage) return null;
  const rows = oneStage.trials.flatMap((t) => {
    const c = t.contrasts.find((x) => x.name === contrast);
    return c && c.raw !== null && c.blup !== null ? [{ trial: t.trial, raw: c.raw, blup: c.blup }] : [];
  });
  if (rows.length === 0) return null;
  const points: ScatterPoint[] = rows.map((r) => ({ label: r.trial, x: r.raw, y: r.blup }));
  return (
    <ChartFrame
      title={`Shrinkage: ${contrast}`}
      csv={() => toCsv([{ header: 'trial', value: (r: (typeof rows)[number]) => r.trial }, { header: 'own_estimate', value: (r) => r.raw }, { header: 'blup', value: (r) => r.blup }], rows)}
      note="Each point is a trial: its own estimate across, its BLUP (pulled toward the pooled mean by the mixed model) up. The dashed line is where they would be equal; the flatter the cloud, the more the trials' differences are noise."
      testId="shrinkage"
    >
      <ScatterChart points={points} xLabel={`Trial's own estimate (${unit})`} yLabel={`BLUP (${unit})`} identity />
    </ChartFrame>
  );
}

export function MetaRegressionPanel({ pooled, rows, covariates, unit }: { pooled: CompactPooledEntry; rows: readonly ForestRow[]; covariates: ReadonlyMap<string, Record<string, number | string | null>>; unit: string }) {
  const mr = pooled.metaRegression;
  if (!mr || mr.moderators.length === 0) return <p className="muted">No moderators in this analysis: add site or trial covariates in the builder to see whether they explain the differences.</p>;
  return (
    <div className="panel-row" data-testid="meta-regression">
      {mr.moderators.map((m) => {
        const slope = mr.coefficients.find((c) => c.term === m);
        const intercept = mr.coefficients.find((c) => c.term === 'intercept');
        const pts: ScatterPoint[] = rows.flatMap((r) => {
          const v = covariates.get(r.trial)?.[m];
          return typeof v === 'number' ? [{ label: r.trial, x: v, y: r.estimate, size: r.weightShare ?? 0 }] : [];
        });
        const line = mr.moderators.length === 1 && slope && intercept ? { intercept: intercept.estimate, slope: slope.estimate } : null;
        return (
          <ChartFrame
            key={m}
            title={`${pooled.name} against ${m}`}
            csv={() => toCsv([{ header: 'trial', value: (p: ScatterPoint) => p.label }, { header: m, value: (p) => p.x }, { header: 'estimate', value: (p) => p.y }, { header: 'weight_share', value: (p) => p.size ?? null }], pts)}
            note={
              slope
                ? `Slope per unit of ${m}: ${formatNumber(slope.estimate, 4)} (${formatNumber(slope.lower, 4)} to ${formatNumber(slope.upper, 4)}), p ${formatP(slope.p)}.${line ? ' The line is the fitted meta-regression.' : ' The fit has several moderators, so no single line is drawn.'} Bubble area is the trial's pooling weight.`
                : `${m} is categorical: see the subgroup estimates.`
            }
          >
            {pts.length > 0 ? <ScatterChart points={pts} xLabel={m} yLabel={`Trial estimate (${unit})`} line={line} /> : <p className="muted">No numeric values of {m}.</p>}
          </ChartFrame>
        );
      })}
      {mr.subgroups.map((s) => (
        <section key={s.moderator} className="panel">
          <h3>Subgroups by {s.moderator}</h3>
          <table className="data">
            <thead>
              <tr>
                <th>Group</th>
                <th>Trials</th>
                <th>Estimate</th>
                <th>Interval</th>
              </tr>
            </thead>
            <tbody>
              {s.groups.map((g) => (
                <tr key={g.level}>
                  <td>{g.level}</td>
                  <td>{g.k}</td>
                  <td>{formatNumber(g.estimate, 3)}</td>
                  <td>
                    {formatNumber(g.lower, 3)} to {formatNumber(g.upper, 3)}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="small-text muted">{s.note}</p>
        </section>
      ))}
      <p className="small-text">
        tau² left after the moderators: {formatNumber(mr.residualTau2, 4)}
        {mr.tau2Explained === null ? '' : ` (${Math.round(mr.tau2Explained * 100)}% of the between-trial variance explained)`}.
      </p>
    </div>
  );
}

/** Beyond this many trials the leave-one-out plot shows the trials that move the estimate most. */
const LOO_SHOWN = 200;

function mostInfluential(points: readonly ScatterPoint[], all: number | null, keep: number): ScatterPoint[] {
  if (points.length <= keep || all === null) return [...points];
  const chosen = [...points].sort((a, b) => Math.abs(b.y - all) - Math.abs(a.y - all) || Number(Boolean(b.flagged)) - Number(Boolean(a.flagged))).slice(0, keep);
  return chosen.sort((a, b) => a.x - b.x);
}

function lastPerYear<R extends { year: number; k: number }>(rows: readonly R[]): R[] {
  const byYear = new Map<number, R>();
  for (const r of rows) {
    const seen = byYear.get(r.year);
    if (!seen || r.k > seen.k) byYear.set(r.year, r);
  }
  return [...byYear.values()].sort((a, b) => a.year - b.year);
}

export function SensitivityPanel({ pooled, unit }: { pooled: CompactPooledEntry; unit: string }) {
  const loo = rowsFromColumnsView(pooled.sensitivity.leaveOneOut);
  const infl = rowsFromColumnsView(pooled.sensitivity.influence);
  const cum = rowsFromColumnsView(pooled.sensitivity.cumulative);
  // flagged as influential: Cook's distance above 4/k, or a deleted residual beyond ±3 (common screening rules)
  const k = Math.max(1, pooled.k);
  const flagged = new Set(infl.filter((r) => (r.cooksDistance ?? 0) > 4 / k || Math.abs(r.studentisedDeletedResidual ?? 0) > 3).map((r) => r.trial));
  const allLoo: ScatterPoint[] = loo.flatMap((r, i) => (r.estimate === null ? [] : [{ label: r.trial, x: i + 1, y: r.estimate, lower: r.lower, upper: r.upper, flagged: flagged.has(r.trial) }]));
  const looPts = mostInfluential(allLoo, pooled.estimate, LOO_SHOWN);
  // one point per year: the pool once all trials up to that year are in
  const cumPts: ScatterPoint[] = lastPerYear(cum).flatMap((r) => (r.estimate === null ? [] : [{ label: `${r.year} (k=${r.k})`, x: r.year, y: r.estimate, lower: r.lower, upper: r.upper }]));
  return (
    <div className="panel-row" data-testid="sensitivity">
      <ChartFrame
        title={`Leave one out: ${pooled.name}`}
        csv={() => toCsv([{ header: 'trial_left_out', value: (r: (typeof loo)[number]) => r.trial }, { header: 'estimate', value: (r) => r.estimate }, { header: 'lower', value: (r) => r.lower }, { header: 'upper', value: (r) => r.upper }, { header: 'influential', value: (r) => flagged.has(r.trial) }], loo)}
        note={
          flagged.size > 0
            ? `Triangles (named) mark influential trials (Cook's distance above 4/k or a deleted residual beyond ±3): ${[...flagged].join(', ')}. The dashed line is the estimate with every trial.`
            : 'No trial stands out as influential (Cook’s distance above 4/k or a deleted residual beyond ±3). The dashed line is the estimate with every trial.'
        }
      >
        {looPts.length < allLoo.length ? (
          <p className="small-text muted">
            Showing the {looPts.length} of {allLoo.length} trials whose removal moves the estimate most; the CSV has them all.
          </p>
        ) : null}
        <ScatterChart points={looPts} xLabel="Trial left out (in report order)" yLabel={`Pooled estimate (${unit})`} hline={pooled.estimate} />
      </ChartFrame>
      <ChartFrame
        title={`Cumulative by year: ${pooled.name}`}
        csv={() => toCsv([{ header: 'year', value: (r: (typeof cum)[number]) => r.year }, { header: 'trials', value: (r) => r.k }, { header: 'estimate', value: (r) => r.estimate }, { header: 'lower', value: (r) => r.lower }, { header: 'upper', value: (r) => r.upper }], cum)}
        note="The pooled estimate as each year's trials were added: a line that settles means later years did not change the answer."
      >
        <ScatterChart points={cumPts} xLabel="Trials up to year" yLabel={`Pooled estimate (${unit})`} connect hline={0} />
      </ChartFrame>
    </div>
  );
}
