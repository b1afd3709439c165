// Checks on the shape of a network before anything is fitted, in words: treatments tested in
// one trial only (their effect rests on one site-year), trials that share no treatment with the
// rest (disconnected: nothing links their means to the others'), and the range of each numeric
// factor per trial where trials tested different ranges (protocols changed over the years).
import type { NetworkInput, TreatmentInfo } from '../../engine/types.js';

export interface NetworkCheck {
  /** Treatments tested in exactly one trial, with that trial. */
  readonly singleTrialTreatments: readonly { readonly treatment: string; readonly trial: string }[];
  /** Groups of trials linked by shared treatments; more than one group means a disconnected network. */
  readonly connectedGroups: readonly (readonly string[])[];
  /** Per numeric factor, the range each trial tested. */
  readonly ranges: readonly { readonly factor: string; readonly trial: string; readonly lowest: number; readonly highest: number; readonly levels: number }[];
  readonly warnings: readonly string[];
}

export function checkNetwork(network: NetworkInput, tested: readonly (readonly TreatmentInfo[])[]): NetworkCheck {
  const names = network.trials.map((t) => t.trial);
  const trialsOf = new Map<string, string[]>();
  // Appended in place: copying each list per trial was quadratic (a seventh of a second at 4,000 trials).
  tested.forEach((ts, i) => ts.forEach((t) => {
    const list = trialsOf.get(t.code);
    if (list) list.push(names[i]);
    else trialsOf.set(t.code, [names[i]]);
  }));
  const singleTrialTreatments = [...trialsOf].filter(([, ts]) => ts.length === 1).map(([treatment, ts]) => ({ treatment, trial: ts[0] }));
  const connectedGroups = groups(names, tested);
  const ranges = network.factors
    .filter((f) => f.kind === 'numeric')
    .flatMap((f) =>
      tested.flatMap((ts, i) => {
        const v = [...new Set(ts.map((t) => t.levels[f.name]).filter((x): x is number => typeof x === 'number'))];
        return v.length === 0 ? [] : [{ factor: f.name, trial: names[i], lowest: Math.min(...v), highest: Math.max(...v), levels: v.length }];
      }),
    );
  const warnings: string[] = [];
  if (singleTrialTreatments.length > 0)
    warnings.push(`treatments tested in one trial only (their effects rest on that trial alone): ${singleTrialTreatments.map((s) => `${s.treatment} (${s.trial})`).join(', ')}`);
  if (connectedGroups.length > 1)
    warnings.push(
      `the trials fall into ${connectedGroups.length} groups that share no treatment with each other, so nothing links their treatment means: ${connectedGroups.map((g) => `{${g.length > 8 ? `${g.slice(0, 8).join(', ')} and ${g.length - 8} more` : g.join(', ')}}`).join(', ')}; contrasts within each trial still pool, but the one-stage means compare groups only through the model's assumptions`,
    );
  for (const f of network.factors.filter((x) => x.kind === 'numeric')) {
    const own = ranges.filter((r) => r.factor === f.name);
    const distinct = new Set(own.map((r) => `${r.lowest}-${r.highest}`));
    if (distinct.size > 1) {
      const byRange = new Map<string, string[]>();
      for (const r of own) {
        const key = `${r.lowest} to ${r.highest}`;
        const list = byRange.get(key);
        if (list) list.push(r.trial);
        else byRange.set(key, [r.trial]);
      }
      warnings.push(`trials tested different ${f.name} ranges${f.unit ? ` (${f.unit})` : ''}: ${[...byRange].map(([range, ts]) => `${range} in ${ts.length} trial${ts.length > 1 ? 's' : ''} (${ts.length > 6 ? `${ts.slice(0, 6).join(', ')} ...` : ts.join(', ')})`).join('; ')}`);
    }
  }
  return { singleTrialTreatments, connectedGroups, ranges, warnings };
}

/** Trials linked when they share a treatment (union-find over treatment codes). */
function groups(names: readonly string[], tested: readonly (readonly TreatmentInfo[])[]): string[][] {
  const parent = names.map((_, i) => i);
  const find = (i: number): number => (parent[i] === i ? i : (parent[i] = find(parent[i])));
  const firstWith = new Map<string, number>();
  tested.forEach((ts, i) => {
    for (const t of ts) {
      const j = firstWith.get(t.code);
      if (j === undefined) firstWith.set(t.code, i);
      else parent[find(i)] = find(j);
    }
  });
  const out = new Map<number, string[]>();
  names.forEach((n, i) => {
    if (tested[i].length === 0) return;
    const r = find(i);
    const group = out.get(r);
    if (group) group.push(n);
    else out.set(r, [n]);
  });
  return [...out.values()];
}
