// The network checks for the chosen trait, compactly: treatments tested in one trial only,
// trials that share no treatment with the rest, and each factor's tested ranges.
import type { HandlerResults } from '../../src/api/handlers.js';
import { rangeLines } from '../shape/networkChecks.js';

type Checks = HandlerResults['trials.checks'];

function few(names: readonly string[], shown = 6): string {
  return names.length > shown ? `${names.slice(0, shown).join(', ')} and ${names.length - shown} more` : names.join(', ');
}

export function NetworkChecks({ checks }: { checks: Checks }) {
  const singles = checks.singleTrialTreatments;
  return (
    <ul className="network-checks" data-testid="network-checks">
      <li data-testid="check-single">
        {singles.length === 0 ? 'Every treatment was tested in at least two trials.' : `Tested in one trial only: ${few(singles.map((s) => `${s.treatment} (${s.trial})`))}.`}
      </li>
      <li data-testid="check-connected" className={checks.disconnected.length > 0 ? 'check-warn' : undefined}>
        {checks.disconnected.length === 0
          ? 'Connected: every trial shares a treatment with the rest.'
          : `Disconnected: ${checks.connectedGroups.length} groups share no treatment; outside the largest: ${few(checks.disconnected)}.`}
      </li>
      {rangeLines(checks).map((l) => (
        <li key={l.text} data-testid="check-range" title={l.trials.join(', ')}>
          {l.text}
        </li>
      ))}
    </ul>
  );
}
