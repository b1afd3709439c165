// The contrast builder's checks, as pure functions: what is wrong with a contrast before it is
// run (sum of coefficients, divisor, treatment codes and levels the protocol does not have, a
// trend on a categorical factor), and what the contrast estimates, in words.

export interface ProtocolShape {
  readonly control: string | null;
  readonly factors: readonly { readonly name: string; readonly kind: 'numeric' | 'categorical'; readonly unit: string | null }[];
  readonly treatments: readonly { readonly code: string; readonly levels: Readonly<Record<string, string | number | null>> }[];
}

export type ContrastDraft =
  | { readonly kind: 'coefficients'; readonly name: string; readonly coefficients: Readonly<Record<string, number>>; readonly divisor: number }
  | { readonly kind: 'levels'; readonly name: string; readonly factor: string; readonly levels: readonly [string, string] }
  | { readonly kind: 'trend'; readonly name: string; readonly factor: string; readonly degree: 1 | 2 | 3 }
  | { readonly kind: 'treated-vs-control'; readonly name: string };

/** Sums closer to zero than this (relative to the largest coefficient) count as zero. */
const ZERO_SUM_TOLERANCE = 1e-9;

export function coefficientSum(coefficients: Readonly<Record<string, number>>): number {
  return Object.values(coefficients).reduce((s, v) => s + v, 0);
}

/** The distinct levels a factor takes over the protocol's treatments ("not applicable" left out), in order. */
export function factorLevels(protocol: ProtocolShape, factor: string): (string | number)[] {
  const out: (string | number)[] = [];
  for (const t of protocol.treatments) {
    const v = t.levels[factor];
    if (v !== null && v !== undefined && !out.some((o) => String(o) === String(v))) out.push(v);
  }
  const numeric = out.every((v) => typeof v === 'number');
  return numeric ? (out as number[]).sort((a, b) => a - b) : out;
}

/** Every problem of a draft contrast, as sentences; empty when it can be run. */
export function checkContrast(c: ContrastDraft, protocol: ProtocolShape, otherNames: readonly string[] = []): string[] {
  const problems: string[] = [];
  const name = c.name.trim();
  if (name === '') problems.push('Give the contrast a name.');
  else if (otherNames.includes(name)) problems.push(`Another contrast is already called "${name}".`);
  switch (c.kind) {
    case 'coefficients': {
      const codes = new Set(protocol.treatments.map((t) => t.code));
      for (const code of Object.keys(c.coefficients)) if (!codes.has(code)) problems.push(`Treatment "${code}" is not in the protocol (known: ${[...codes].join(', ')}).`);
      for (const [code, v] of Object.entries(c.coefficients)) if (!Number.isFinite(v)) problems.push(`The coefficient of ${code} is not a number.`);
      const values = Object.values(c.coefficients).filter((v) => Number.isFinite(v));
      const largest = Math.max(0, ...values.map(Math.abs));
      if (largest === 0) problems.push('Every coefficient is zero: the contrast compares nothing.');
      else {
        const sum = coefficientSum(c.coefficients);
        if (Math.abs(sum) > ZERO_SUM_TOLERANCE * largest) problems.push(`The coefficients must sum to zero; they sum to ${round(sum)}.`);
      }
      if (!Number.isFinite(c.divisor)) problems.push('The divisor is not a number.');
      else if (c.divisor === 0) problems.push('The divisor must not be zero.');
      break;
    }
    case 'levels': {
      const f = protocol.factors.find((x) => x.name === c.factor);
      if (!f) {
        problems.push(`Factor "${c.factor}" is not in the protocol.`);
        break;
      }
      const known = factorLevels(protocol, c.factor).map(String);
      for (const level of c.levels) if (!known.includes(level)) problems.push(`"${level}" is not a level of ${c.factor} (levels: ${known.join(', ')}).`);
      if (c.levels[0] === c.levels[1]) problems.push('Choose two different levels.');
      break;
    }
    case 'trend': {
      const f = protocol.factors.find((x) => x.name === c.factor);
      if (!f) {
        problems.push(`Factor "${c.factor}" is not in the protocol.`);
        break;
      }
      if (f.kind !== 'numeric') {
        problems.push(`A trend needs a numeric factor; ${c.factor} is categorical (its levels have no spacing).`);
        break;
      }
      const levels = factorLevels(protocol, c.factor).length;
      if (c.degree >= levels) problems.push(`A trend of degree ${c.degree} needs at least ${c.degree + 1} distinct levels of ${c.factor}; the protocol has ${levels}.`);
      break;
    }
    case 'treated-vs-control':
      if (!protocol.control) problems.push('The protocol names no control treatment.');
      break;
  }
  return problems;
}

function round(v: number): string {
  return Number(v.toPrecision(6)).toString();
}

/** What the contrast estimates, in words a committee member reads. */
export function describeContrast(c: ContrastDraft, protocol: ProtocolShape): string {
  switch (c.kind) {
    case 'coefficients': {
      const pos = Object.entries(c.coefficients).filter(([, v]) => v > 0);
      const neg = Object.entries(c.coefficients).filter(([, v]) => v < 0);
      const side = (xs: [string, number][]) => xs.map(([k, v]) => (Math.abs(v) === 1 ? k : `${round(Math.abs(v))}×${k}`)).join(' + ') || 'nothing';
      const div = c.divisor === 1 ? '' : `, divided by ${round(c.divisor)}`;
      return `(${side(pos)}) minus (${side(neg)})${div}: a weighted difference of treatment means.`;
    }
    case 'levels':
      return `Mean at ${c.factor} = ${c.levels[0]} minus mean at ${c.factor} = ${c.levels[1]}, averaged over the other factors, over the combinations tested at both levels.`;
    case 'trend': {
      const f = protocol.factors.find((x) => x.name === c.factor);
      const levels = factorLevels(protocol, c.factor).join(', ');
      const what = c.degree === 1 ? 'Linear' : c.degree === 2 ? 'Quadratic' : 'Cubic';
      return `${what} trend over ${c.factor} on its real spacing (${levels}${f?.unit ? ` ${f.unit}` : ''}), as an orthogonal polynomial; each trial uses the levels it tested.`;
    }
    case 'treated-vs-control':
      return `Mean of all treated treatments minus the control${protocol.control ? ` ${protocol.control}` : ''}.`;
  }
}
