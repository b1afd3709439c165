// Pairwise comparisons asked for in the spec (within each trial, with its multiplicity
// adjustment). One trial: each comparison with its interval. Several: per pair, in how many
// trials each treatment came out ahead at the spec's level, and the median difference.
import type { AnyAnalysisReport, TrialStageEntry } from '../../api/analysis/report.js';
import type { PairwiseResult } from '../../engine/trial/types.js';
import { decimalsFromSe, effectCell, fixed, pText, seText } from './numbers.js';
import { section, textTable } from './table.js';

const METHOD_WORDS: Record<PairwiseResult['method'], string> = { tukey: 'Tukey–Kramer', holm: 'Holm' };

export function pairwiseLines(r: AnyAnalysisReport): string[] {
  const withPairs = r.twoStage.trials.filter((t): t is TrialStageEntry & { pairwise: PairwiseResult } => 'pairwise' in t && t.pairwise !== null);
  if (withPairs.length === 0) return [];
  const method = METHOD_WORDS[withPairs[0].pairwise.method];
  const alpha = 1 - r.settings.confidence;
  const unit = r.settings.transform === 'none' ? r.unit : `${r.settings.transform} scale`;
  if (withPairs.length === 1) {
    const t = withPairs[0];
    return section(`Pairwise comparisons in ${t.trial} (${method}-adjusted)`, [
      textTable(
        ['pair', `difference (${Math.round(r.settings.confidence * 100)}% adjusted interval)`, 'SE', 'adjusted p'],
        t.pairwise.comparisons.map((c) => [`${c.first} - ${c.second}`, effectCell(c.difference, c.lower, c.upper, unit, c.se), seText(c.se), pText(c.pAdjusted)]),
      ),
    ]);
  }
  const byPair = new Map<string, { first: string; second: string; n: number; firstAhead: number; secondAhead: number; differences: number[]; se: number[] }>();
  for (const t of withPairs)
    for (const c of t.pairwise.comparisons) {
      const key = `${c.first}\u0000${c.second}`;
      const e = byPair.get(key) ?? { first: c.first, second: c.second, n: 0, firstAhead: 0, secondAhead: 0, differences: [], se: [] };
      e.n++;
      if (c.difference !== null) e.differences.push(c.difference);
      if (c.se !== null) e.se.push(c.se);
      if (c.pAdjusted !== null && c.pAdjusted < alpha && c.difference !== null) {
        if (c.difference > 0) e.firstAhead++;
        else e.secondAhead++;
      }
      byPair.set(key, e);
    }
  const rows = [...byPair.values()].map((e) => {
    const d = decimalsFromSe(median(e.se));
    return [`${e.first} - ${e.second}`, String(e.n), String(e.firstAhead), String(e.secondAhead), String(e.n - e.firstAhead - e.secondAhead), fixed(median(e.differences), d)];
  });
  return section(`Pairwise comparisons within each trial (${method}-adjusted, p < ${fixed(alpha, 2)}; ${withPairs.length} trials; each trial's comparisons are in the JSON)`, [
    textTable(['pair', 'trials', 'first higher', 'second higher', 'not separated', `median difference${unit ? ` (${unit})` : ''}`], rows),
  ]);
}

function median(xs: readonly number[]): number | null {
  if (xs.length === 0) return null;
  const s = [...xs].sort((a, b) => a - b);
  const m = Math.floor(s.length / 2);
  return s.length % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
}
