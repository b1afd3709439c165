// A trial's data-quality flags, one line per kind; several of a kind fold into a summary that
// opens to list them all.
import type { TrialAnalysis } from '../app/views.js';
import { groupFlags } from '../shape/trialTable.js';

export function FlagList({ flags }: { flags: TrialAnalysis['flags'] }) {
  if (flags.length === 0) return null;
  return (
    <ul className="trial-flags" aria-label="Data-quality flags">
      {groupFlags(flags).map((g) => (
        <li key={g.code}>
          <span className={`flag flag-${g.code}`}>{g.word}</span>{' '}
          {g.messages.length === 1 ? (
            g.messages[0]
          ) : (
            <details>
              <summary>
                {g.messages[0]} <span className="muted">(and {g.messages.length - 1} more like it)</span>
              </summary>
              <ul>
                {g.messages.slice(1).map((m) => (
                  <li key={m}>{m}</li>
                ))}
              </ul>
            </details>
          )}
        </li>
      ))}
    </ul>
  );
}
