// Plain-text rendering of a rate-response result for the terminal: a short summary of the
// pooled optimum, one line per trial, the price-ratio sensitivity, then cautions.
import type { Num, RateResponseResult } from './types.js';
import { formatMixedModelText } from './mixed/formatMixedModelText.js';

function f(x: Num, digits = 1): string {
  return x === null ? '–' : x.toFixed(digits);
}

function g(x: Num): string {
  return x === null ? '–' : Math.abs(x) >= 1e4 || (Math.abs(x) < 1e-3 && x !== 0) ? x.toExponential(3) : x.toPrecision(4);
}

function table(header: string[], rows: string[][]): string[] {
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j].length)));
  const line = (cells: string[]) => cells.map((c, j) => (j === 0 ? c.padEnd(widths[j]) : c.padStart(widths[j]))).join('  ');
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)];
}

export function formatRateResponseText(result: RateResponseResult): string {
  const ru = result.rateUnit ?? '';
  const yu = result.yieldUnit ?? 'yield units';
  const p = result.pooled;
  const out: string[] = [];
  const at = result.at ? ` at ${Object.entries(result.at).map(([k, v]) => `${k} = ${v}`).join(', ')}` : ' (averaged over the other factors)';
  out.push(`Response to ${result.factor}${at}; curve: ${result.model}; price ratio ${g(result.priceRatio)} ${yu} per ${ru || 'rate unit'}`);
  out.push('');
  out.push(`Economic optimum (${p.trialsUsed} trials pooled): ${f(p.optimum)} ${ru}` + (p.optimumLower !== null ? `   interval ${f(p.optimumLower)} to ${f(p.optimumUpper)}` : ''));
  out.push(`  interval method: ${p.method}`);
  out.push(`  rates whose mean net return is within ${g(result.recommendation.nearBest?.within ?? null)} ${yu} of the best: ${f(p.profitableLower)} to ${f(p.profitableUpper)} ${ru}`);
  if (result.recommendation.recommended.source === 'pooled-curve' && result.recommendation.recommended.upperAtTestedLimit) out.push(`  the interval's upper end is capped at the highest tested rate (${f(p.range[1])} ${ru}); the true limit may be higher`);
  out.push(`  at the optimum: yield gain ${f(p.yieldGainAtOptimum, 3)} ${yu}, net return ${f(p.netReturnAtOptimum, 3)} ${yu}`);
  if (p.money) out.push(`  in money: net return ${f(p.money.netReturnAtOptimum, 2)} ${p.money.currency ?? ''}, input cost ${f(p.money.inputCostAtOptimum, 2)} ${p.money.currency ?? ''}`);
  if (p.flags.length > 0) out.push(`  note: ${p.flags.join(', ')}`);
  const s = result.siteOptima;
  out.push(`Site optima (${s.n} trials): ` + s.quantiles.map((q) => `${Math.round(q.p * 100)}% ${f(q.value)}`).join(', ') + `; no input pays at ${f(s.shareNoInputPays === null ? null : s.shareNoInputPays * 100, 0)}% of trials`);
  const mixed = formatMixedModelText(result.mixedModel, ru);
  if (mixed.length > 0) out.push('', ...mixed);
  out.push('');
  out.push(
    ...table(
      ['Trial', 'Curve', 'Converged', 'Optimum', 'Gain', 'Net', 'Flags'],
      result.trials.map((t) => [t.trial, t.model ?? '–', t.converged ? 'yes' : 'NO', f(t.optimum), f(t.yieldGainAtOptimum, 3), f(t.netReturnAtOptimum, 3), [...t.flags, ...(t.convergence.note && !t.converged ? [t.convergence.note] : [])].join('; ')]),
    ),
  );
  out.push('');
  out.push('Curve parameters (standard error):');
  for (const t of result.trials) {
    if (!t.model) continue;
    const parts = Object.entries(t.params).map(([k, v]) => `${k} ${g(v)}` + (t.standardErrors[k] !== undefined ? ` (${g(t.standardErrors[k])})` : ''));
    out.push(`  ${t.trial}  ${t.model}: ${parts.join(', ')}`);
  }
  const withTables = result.trials.filter((t) => t.aicTable);
  if (withTables.length > 0) {
    out.push('');
    out.push('Curve choice by AICc (difference from the best converged curve):');
    const models = withTables[0].aicTable?.map((r) => r.model) ?? [];
    out.push(
      ...table(
        ['Trial', ...models],
        withTables.map((t) => [t.trial, ...(t.aicTable ?? []).map((r) => (r.deltaAicc === null ? (r.converged ? 'n/a' : 'failed') : r.deltaAicc.toFixed(2)) + (r.converged ? '' : '*'))]),
      ),
    );
    if (withTables.some((t) => (t.aicTable ?? []).some((r) => !r.converged))) out.push('  * did not converge');
  }
  out.push('');
  out.push('Price-ratio sensitivity:');
  out.push(
    ...table(
      ['Ratio x', 'Price ratio', 'Optimum', 'Near best from', 'to', 'Net return', 'No input pays'],
      result.sensitivity.map((r) => [String(r.multiplier), g(r.priceRatio), f(r.optimum), f(r.profitableLower), f(r.profitableUpper), f(r.netReturnAtOptimum, 3), r.shareNoInputPays === null ? '–' : `${Math.round(r.shareNoInputPays * 100)}%`]),
    ),
  );
  out.push('');
  out.push(result.unitNote);
  out.push('');
  for (const line of result.curveForms) out.push(line);
  if (result.warnings.length > 0) {
    out.push('');
    out.push('Warnings:');
    for (const w of result.warnings) out.push(`  - ${w}`);
  }
  out.push('');
  for (const c of result.cautions) out.push(c);
  return out.join('\n');
}
