// A treatment whose numeric level differs between trials (coded by level number, with the
// amount applied at each site) is analysed from a file (`analyze --data`), but the workspace
// does not store per-trial amounts yet: refused before anything is written, naming an example
// and what to do, rather than stored with one amount for every trial.
import type { ParsedPlotTable } from '../intake/types.js';
import { ManyfieldError } from '../api/result.js';

export function refuseAppliedLevels(table: ParsedPlotTable): void {
  const trial = table.trials.find((t) => t.appliedLevels && Object.keys(t.appliedLevels).length > 0);
  if (!trial?.appliedLevels) return;
  const [code, levels] = Object.entries(trial.appliedLevels)[0];
  const [factor, amount] = Object.entries(levels)[0];
  const first = table.treatments.find((t) => t.code === code)?.levels[factor];
  throw new ManyfieldError(
    'invalid-input',
    `${table.file}: treatment "${code}" has ${factor} ${String(first)} in one trial and ${amount} in trial "${trial.key}" (a treatment coded by level number, with the amount applied at each site). A workspace cannot store per-trial amounts yet; nothing was imported. Analyse the file directly with \`manyfield analyze --data ${table.file} --spec SPEC.json\`, or give each amount its own treatment code.`,
    { treatment: code, factor, trial: trial.key },
  );
}
