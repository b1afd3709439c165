// Plots left out by an explicit, recorded user choice (spec.exclude). Nothing is ever dropped
// because a diagnostic flagged it; only this list removes plots, and each carries its reason.
// A plot is named by the field's own label (the data's plot column) or, when the spec says so
// with "row", by its file row; never by an internal id, so a spec works on any workspace.
import type { NetworkInput, PlotObservation, TrialInput } from '../../engine/types.js';
import { plotName } from '../../engine/plotName.js';
import type { ExclusionSpec } from '../../spec/analysisSpec.js';
import { didYouMean, listNames } from '../../spec/closest.js';
import { ManyfieldError } from '../result.js';

export function applyExclusions(network: NetworkInput, exclude: readonly ExclusionSpec[], warnings: string[]): NetworkInput {
  if (exclude.length === 0) return network;
  const byTrial = new Map<string, { index: number; spec: ExclusionSpec }[]>();
  const problems: string[] = [];
  const trialNames = network.trials.map((t) => t.trial);
  exclude.forEach((e, index) => {
    if (!trialNames.includes(e.trial)) {
      problems.push(`spec.exclude[${index}].trial: no trial "${e.trial}" holds data of trait "${network.trait}"; the trials are ${listNames(trialNames)}${didYouMean(e.trial, trialNames)}`);
      return;
    }
    const list = byTrial.get(e.trial) ?? [];
    list.push({ index, spec: e });
    byTrial.set(e.trial, list);
  });
  const trials = network.trials.map((t) => {
    const wanted = byTrial.get(t.trial);
    if (!wanted) return t;
    const marked = new Map<PlotObservation, string>();
    for (const { index, spec } of wanted) {
      const found = findPlot(t, spec, `spec.exclude[${index}]`);
      if (typeof found === 'string') {
        problems.push(found);
        continue;
      }
      marked.set(found, spec.reason);
      const where = found.label ? `plot ${found.label} (treatment ${found.treatment}${found.sourceRow ? `, file row ${found.sourceRow}` : ''})` : `${plotName(found)} (treatment ${found.treatment})`;
      warnings.push(`trial ${t.trial}, ${where} excluded by the user: ${spec.reason}`);
      if (found.value === null) warnings.push(`trial ${t.trial}, ${where} has no value of "${network.trait}": excluding it changes nothing`);
      if (found.excluded) warnings.push(`trial ${t.trial}, ${where} was already excluded in the workspace (${found.excluded.reason})`);
    }
    if (marked.size === 0) return t;
    const plots = t.plots.map((p) => {
      const reason = marked.get(p);
      return reason === undefined ? p : { ...p, excluded: { reason } };
    });
    return { ...t, plots };
  });
  if (problems.length > 0) throw new ManyfieldError('invalid-argument', `the spec's exclusions name plots that cannot be found; nothing was analysed:\n  ${problems.join('\n  ')}`, { problems });
  return { ...network, trials };
}

/** The plot an exclusion names, or a message saying why none matches. */
function findPlot(trial: TrialInput, e: ExclusionSpec, key: string): PlotObservation | string {
  if (e.row !== undefined) {
    const hit = trial.plots.find((p) => p.sourceRow === e.row);
    if (hit) return hit;
    const rows = trial.plots.map((p) => p.sourceRow).filter((r): r is number => typeof r === 'number');
    return rows.length === 0
      ? `${key}.row: trial "${trial.trial}" does not know its plots' file rows; name the plot by its label with "plot"`
      : `${key}.row: no plot of trial "${trial.trial}" is on file row ${e.row}; its plots are on rows ${Math.min(...rows)} to ${Math.max(...rows)}`;
  }
  const wanted = String(e.plot);
  const labels = trial.plots.map((p) => p.label).filter((l): l is string => typeof l === 'string' && l !== '');
  if (labels.length === 0) {
    return `${key}.plot: the plots of trial "${trial.trial}" have no labels (the data had no plot column), so plot "${wanted}" cannot be found; add a plot column (columns.plot) or name the plot by its file row with "row" instead of "plot"`;
  }
  const hit = trial.plots.find((p) => p.label === wanted) ?? trial.plots.find((p) => p.label !== undefined && p.label !== null && sameNumber(p.label, wanted));
  if (hit) return hit;
  return `${key}.plot: trial "${trial.trial}" has no plot labelled "${wanted}"; its plots are ${listNames(labels, 12)}${didYouMean(wanted, labels)}`;
}

/** "204" and "204.0" or " 204" name the same plot; a label that is not a number only matches itself. */
function sameNumber(a: string, b: string): boolean {
  const x = Number(a);
  const y = Number(b);
  return a.trim() !== '' && b.trim() !== '' && Number.isFinite(x) && x === y;
}
