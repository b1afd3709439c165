// The network checks in a few lines for the network screen: each factor's distinct tested ranges
// with how many trials tested each (the trials named on hover), lowest range first.
import type { HandlerResults } from '../../src/api/handlers.js';

type Checks = HandlerResults['trials.checks'];

export interface RangeLine {
  readonly factor: string;
  readonly text: string;
  readonly trials: readonly string[];
}

function amount(v: number): string {
  return Number(v.toPrecision(4)).toLocaleString('en-GB');
}

export function rangeLines(checks: Checks): RangeLine[] {
  const byKey = new Map<string, { factor: string; unit: string | null; lowest: number; highest: number; trials: string[] }>();
  for (const r of checks.ranges) {
    const key = `${r.factor}\u0000${r.lowest}\u0000${r.highest}`;
    const line = byKey.get(key) ?? { factor: r.factor, unit: r.unit, lowest: r.lowest, highest: r.highest, trials: [] };
    line.trials.push(r.trial);
    byKey.set(key, line);
  }
  return [...byKey.values()]
    .sort((a, b) => a.factor.localeCompare(b.factor) || a.lowest - b.lowest || a.highest - b.highest)
    .map((l) => ({
      factor: l.factor,
      text: `${l.factor} ${amount(l.lowest)}–${amount(l.highest)}${l.unit ? ` ${l.unit}` : ''} in ${l.trials.length} ${l.trials.length === 1 ? 'trial' : 'trials'}`,
      trials: l.trials,
    }));
}
