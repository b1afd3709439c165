// The network checks of one trait below the trial list (`manyfield trials --trait T`): the
// findings in words, then each trial's range of every numeric factor.
import type { TrialNetworkChecks } from '../api/trials/networkChecks.js';
import { num, textTable } from './textTable.js';

export function formatNetworkChecks(c: TrialNetworkChecks): string {
  const lines = [`\nNetwork checks for "${c.trait}" (${c.trials} trial${c.trials === 1 ? '' : 's'} with values):`];
  lines.push(
    c.singleTrialTreatments.length === 0
      ? '  every treatment was tested in at least two trials'
      : `  tested in one trial only: ${c.singleTrialTreatments.map((s) => `${s.treatment} (${s.trial})`).join(', ')}`,
  );
  lines.push(
    c.disconnected.length === 0
      ? '  connected: every trial shares a treatment with the rest'
      : `  disconnected: ${c.connectedGroups.length} groups share no treatment with each other; outside the largest: ${c.disconnected.join(', ')}`,
  );
  const text = lines.join('\n');
  if (c.ranges.length === 0) return `${text}\n  no numeric factor\n`;
  const rows = c.ranges.map((r) => [r.trial, `${r.factor}${r.unit ? ` (${r.unit})` : ''}`, num(r.lowest), num(r.highest), String(r.levels)]);
  return `${text}\n\n${textTable(['trial', 'factor', 'lowest', 'highest', 'levels'], rows)}\n`;
}
