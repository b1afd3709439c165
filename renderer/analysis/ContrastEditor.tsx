// One contrast in the builder: its name, the fields of its kind, what it estimates in words and
// every problem with it, checked as the user types.
import { checkContrast, coefficientSum, describeContrast, factorLevels, type ContrastDraft, type ProtocolShape } from '../shape/contrastCheck.js';

interface Props {
  readonly index: number;
  readonly draft: ContrastDraft;
  readonly protocol: ProtocolShape;
  readonly otherNames: readonly string[];
  readonly onChange: (d: ContrastDraft) => void;
  readonly onRemove: () => void;
}

const KIND_WORDS: Record<ContrastDraft['kind'], string> = {
  coefficients: 'coefficients over the treatments',
  levels: 'two levels of a factor',
  trend: 'trend over a numeric factor',
  'treated-vs-control': 'treated against control',
};

export function blankContrast(kind: ContrastDraft['kind'], protocol: ProtocolShape, n: number): ContrastDraft {
  const numeric = protocol.factors.find((f) => f.kind === 'numeric')?.name ?? protocol.factors[0]?.name ?? '';
  const categorical = protocol.factors.find((f) => f.kind === 'categorical')?.name ?? protocol.factors[0]?.name ?? '';
  const levels = factorLevels(protocol, categorical).map(String);
  switch (kind) {
    case 'coefficients':
      return { kind, name: `contrast_${n}`, coefficients: Object.fromEntries(protocol.treatments.map((t) => [t.code, 0])), divisor: 1 };
    case 'levels':
      return { kind, name: `contrast_${n}`, factor: categorical, levels: [levels[0] ?? '', levels[1] ?? ''] };
    case 'trend':
      return { kind, name: `contrast_${n}`, factor: numeric, degree: 1 };
    case 'treated-vs-control':
      return { kind, name: `contrast_${n}` };
  }
}

export function ContrastEditor({ index, draft, protocol, otherNames, onChange, onRemove }: Props) {
  const n = index + 1;
  const problems = checkContrast(draft, protocol, otherNames);
  const label = `Contrast ${n}`;
  return (
    <fieldset className={`contrast-card ${problems.length ? 'has-problems' : ''}`} data-testid="contrast-card">
      <legend>
        {label}: {KIND_WORDS[draft.kind]}
      </legend>
      <div className="row-fields">
        <label>
          Name <input aria-label={`${label} name`} value={draft.name} onChange={(e) => onChange({ ...draft, name: e.target.value })} />
        </label>
        <button type="button" className="small" onClick={onRemove} aria-label={`Remove ${label.toLowerCase()}`}>
          Remove
        </button>
      </div>
      {draft.kind === 'coefficients' ? (
        <div className="coef-grid">
          {protocol.treatments.map((t) => (
            <label key={t.code}>
              {t.code}
              <input
                type="number"
                step="any"
                aria-label={`${label} coefficient of ${t.code}`}
                value={draft.coefficients[t.code] ?? 0}
                onChange={(e) => onChange({ ...draft, coefficients: { ...draft.coefficients, [t.code]: e.target.value === '' ? 0 : Number(e.target.value) } })}
              />
            </label>
          ))}
          <label>
            Divisor
            <input type="number" step="any" aria-label={`${label} divisor`} value={draft.divisor} onChange={(e) => onChange({ ...draft, divisor: e.target.value === '' ? Number.NaN : Number(e.target.value) })} />
          </label>
          <span className={`sum-check ${Math.abs(coefficientSum(draft.coefficients)) < 1e-9 ? 'ok' : 'bad'}`} data-testid="zero-sum">
            Sum {Number(coefficientSum(draft.coefficients).toPrecision(6))} {Math.abs(coefficientSum(draft.coefficients)) < 1e-9 ? '✓ sums to zero' : '✗ must be 0'}
          </span>
        </div>
      ) : null}
      {draft.kind === 'levels' ? (
        <div className="row-fields">
          <label>
            Factor{' '}
            <select aria-label={`${label} factor`} value={draft.factor} onChange={(e) => onChange({ ...draft, factor: e.target.value })}>
              {protocol.factors.map((f) => (
                <option key={f.name}>{f.name}</option>
              ))}
            </select>
          </label>
          {[0, 1].map((i) => (
            <label key={i}>
              {i === 0 ? 'Level' : 'minus level'}{' '}
              <select
                aria-label={`${label} ${i === 0 ? 'first' : 'second'} level`}
                value={draft.levels[i]}
                onChange={(e) => onChange({ ...draft, levels: i === 0 ? [e.target.value, draft.levels[1]] : [draft.levels[0], e.target.value] })}
              >
                <option value="">choose</option>
                {factorLevels(protocol, draft.factor).map((v) => (
                  <option key={String(v)}>{String(v)}</option>
                ))}
              </select>
            </label>
          ))}
        </div>
      ) : null}
      {draft.kind === 'trend' ? (
        <div className="row-fields">
          <label>
            Factor{' '}
            <select aria-label={`${label} factor`} value={draft.factor} onChange={(e) => onChange({ ...draft, factor: e.target.value })}>
              {protocol.factors.map((f) => (
                <option key={f.name} value={f.name}>
                  {f.name} ({f.kind})
                </option>
              ))}
            </select>
          </label>
          <label>
            Degree{' '}
            <select aria-label={`${label} degree`} value={draft.degree} onChange={(e) => onChange({ ...draft, degree: Number(e.target.value) as 1 | 2 | 3 })}>
              <option value={1}>1 (linear)</option>
              <option value={2}>2 (quadratic)</option>
              <option value={3}>3 (cubic)</option>
            </select>
          </label>
        </div>
      ) : null}
      <p className="contrast-words" data-testid="contrast-words">
        Estimates: {describeContrast(draft, protocol)}
      </p>
      {problems.length > 0 ? (
        <ul className="problems" role="alert" data-testid="contrast-problems">
          {problems.map((p) => (
            <li key={p}>⚠ {p}</li>
          ))}
        </ul>
      ) : null}
    </fieldset>
  );
}
