// A first guess at the column mapping from header names alone, for the intake screen to
// pre-fill; the user confirms or corrects every choice before anything is validated.
import type { ColumnsSpec } from '../../spec/analysisSpec.js';

export interface MappingGuess {
  readonly columns: ColumnsSpec;
  /** The trait measured in the response column, with the unit read from the header when it gives one. */
  readonly trait?: { readonly name: string; readonly unit: string };
}

type SingleKey = 'site' | 'year' | 'trial' | 'block' | 'treatment' | 'plot' | 'row' | 'col' | 'design';

const SINGLE: readonly (readonly [SingleKey, RegExp])[] = [
  ['site', /^(site|location|loc|farm|station)( ?(code|id|name))?$/],
  ['year', /^(year|yr|season|harvest year)$/],
  ['trial', /^(trial|env|environment|experiment|exp|site ?year)( ?(code|id|key|name))?$/],
  ['block', /^(block|blk|rep|replicate|replication)$/],
  ['treatment', /^(treatment|trt|treat|trt ?code|treatment ?code)$/],
  ['plot', /^(plot|plot ?(id|no|number))$/],
  ['row', /^(row|range|plot ?row)$/],
  ['col', /^(col|column|plot ?col(umn)?)$/],
  ['design', /^(design|layout)$/],
];
const RESPONSE = /^(yield|grain ?yield|response|value|y)\b/;
const FACTOR = /^(rate|dose|n ?rate|amount|timing|time|application ?timing|product|source|method)\b/;

/** Header text lower-cased, separators as spaces, a trailing unit "(t/ha)" or "[t/ha]" removed. */
function normalise(header: string): { key: string; unit: string | null } {
  const unit = /[([]\s*([^)\]]+?)\s*[)\]]\s*$/.exec(header);
  const bare = unit ? header.slice(0, unit.index) : header;
  return { key: bare.trim().toLowerCase().replace(/[_.\-\s]+/g, ' '), unit: unit ? unit[1] : null };
}

export function guessMapping(header: readonly string[]): MappingGuess {
  const columns: { -readonly [K in keyof ColumnsSpec]: ColumnsSpec[K] } = {};
  const used = new Set<number>();
  header.forEach((h, i) => {
    const { key } = normalise(h);
    for (const [name, pattern] of SINGLE) {
      if (columns[name] === undefined && pattern.test(key)) {
        columns[name] = h;
        used.add(i);
        return;
      }
    }
  });
  let trait: MappingGuess['trait'];
  header.forEach((h, i) => {
    if (used.has(i)) return;
    const { key, unit } = normalise(h);
    if (columns.response === undefined && RESPONSE.test(key)) {
      columns.response = h;
      used.add(i);
      trait = { name: key.replace(/\s+/g, '_'), unit: unit ?? '' };
    } else if (FACTOR.test(key)) {
      columns.factors = { ...columns.factors, [key.replace(/\s+/g, '_')]: h };
      used.add(i);
    }
  });
  return trait === undefined ? { columns } : { columns, trait };
}
