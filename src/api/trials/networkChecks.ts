// The network checks of one trait, for the trial list (`manyfield trials --trait`, the network
// screen): treatments tested in one trial only, trials that share no treatment with the rest, and
// each trial's range of every numeric factor (the amounts applied there). The same checks the
// analysis runs before fitting (analysis/networkChecks.ts), on the same treatments: those with an
// analysed value of the trait, at the amounts stored for each trial.
import type { Workspace } from '../../store/index.js';
import { loadNetwork, openWorkspaceForReading, resolveWorkspacePath, explainSqliteError } from '../../store/index.js';
import { findTrait, trialsWithTrait } from '../../store/network.js';
import { checkNetwork } from '../analysis/networkChecks.js';
import { testedTreatments } from '../analysis/testedTreatments.js';

export interface FactorRange {
  readonly factor: string;
  readonly unit: string | null;
  readonly trial: string;
  readonly lowest: number;
  readonly highest: number;
  /** Distinct levels tested. */
  readonly levels: number;
}

export interface TrialNetworkChecks {
  readonly trait: string;
  readonly trials: number;
  readonly singleTrialTreatments: readonly { readonly treatment: string; readonly trial: string }[];
  /** Trials linked by shared treatments; more than one group is a disconnected network. */
  readonly connectedGroups: readonly (readonly string[])[];
  /** Trials outside the largest group: they share no treatment with the rest. */
  readonly disconnected: readonly string[];
  readonly ranges: readonly FactorRange[];
  /** The same findings in words, as the analysis warnings give them. */
  readonly warnings: readonly string[];
}

export function networkChecksOf(ws: Workspace, trait: string): TrialNetworkChecks {
  const t = findTrait(ws, trait);
  // A trait's trials follow one protocol in an analysis; checked per protocol, listed together.
  const byProtocol = new Map<number, number[]>();
  for (const r of trialsWithTrait(ws, t.id)) byProtocol.set(r.protocol_id, [...(byProtocol.get(r.protocol_id) ?? []), r.id]);
  const singles: TrialNetworkChecks['singleTrialTreatments'][number][] = [];
  const groups: string[][] = [];
  const ranges: FactorRange[] = [];
  const warnings: string[] = [];
  let trials = 0;
  for (const ids of byProtocol.values()) {
    const network = loadNetwork(ws, trait, { trials: ids });
    const check = checkNetwork(network, network.trials.map((x) => testedTreatments(x, network.treatments)));
    const units = new Map(network.factors.map((f) => [f.name, f.unit ?? null]));
    trials += network.trials.length;
    singles.push(...check.singleTrialTreatments);
    groups.push(...check.connectedGroups.map((g) => [...g]));
    ranges.push(...check.ranges.map((r) => ({ ...r, unit: units.get(r.factor) ?? null })));
    warnings.push(...check.warnings);
  }
  if (byProtocol.size > 1) warnings.push(`the trials measuring "${trait}" follow ${byProtocol.size} protocols, checked one by one; trials of different protocols share no treatment`);
  const largest = groups.reduce((best, g) => (g.length > best.length ? g : best), [] as string[]);
  const disconnected = groups.filter((g) => g !== largest).flat();
  return { trait: t.name, trials, singleTrialTreatments: singles, connectedGroups: groups, disconnected, ranges, warnings };
}

export function trialNetworkChecks(path: string, trait: string): TrialNetworkChecks {
  try {
    const ws = openWorkspaceForReading(resolveWorkspacePath(path));
    try {
      return networkChecksOf(ws, trait);
    } finally {
      ws.close();
    }
  } catch (e) {
    throw explainSqliteError(e, path);
  }
}
