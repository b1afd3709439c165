// The analysis builder: every setting of the spec in named groups; it writes the JSON the
// command reads, and loads and saves spec files.
import { useRef, type ReactNode } from 'react';
import type { ContrastDraft, ProtocolShape } from '../shape/contrastCheck.js';
import { draftToSpec, priceRatio, specToDraft, type SpecDraft } from '../shape/specDraft.js';
import { factorLevels } from '../shape/contrastCheck.js';
import { ContrastEditor, blankContrast } from './ContrastEditor.js';

const RANDOM_TERMS = ['trial', 'block', 'treatment-by-trial', 'site', 'year', 'treatment-by-site', 'treatment-by-year'] as const;

interface Props {
  readonly draft: SpecDraft;
  readonly onChange: (d: SpecDraft) => void;
  readonly protocol: ProtocolShape;
  readonly traits: readonly { readonly name: string; readonly unit: string }[];
  readonly covariateNames: readonly string[];
  readonly onSaveSpec: () => void;
  readonly onLoadProblem: (message: string | null) => void;
}

function Group({ title, children, help }: { title: string; children: ReactNode; help?: string }) {
  return (
    <fieldset className="builder-group">
      <legend>{title}</legend>
      {help ? <p className="small-text muted">{help}</p> : null}
      {children}
    </fieldset>
  );
}

export function SpecBuilder({ draft, onChange, protocol, traits, covariateNames, onSaveSpec, onLoadProblem }: Props) {
  const set = <K extends keyof SpecDraft>(k: K, v: SpecDraft[K]) => onChange({ ...draft, [k]: v });
  const fileInput = useRef<HTMLInputElement>(null);
  const names = draft.contrasts.map((c) => c.name.trim());
  const trait = traits.find((t) => t.name === draft.trait);
  const numericFactors = protocol.factors.filter((f) => f.kind === 'numeric');
  const load = async (file: File) => {
    try {
      const spec = JSON.parse(await file.text()) as Record<string, unknown>;
      onChange(specToDraft(spec, draft));
      onLoadProblem(null);
    } catch (e) {
      onLoadProblem(`Could not read ${file.name}: ${e instanceof Error ? e.message : String(e)}`);
    }
  };
  const addContrast = (kind: ContrastDraft['kind']) => set('contrasts', [...draft.contrasts, blankContrast(kind, protocol, draft.contrasts.length + 1)]);
  return (
    <div className="builder" data-testid="spec-builder">
      <div className="builder-files">
        <button type="button" onClick={() => fileInput.current?.click()}>
          Load a spec file…
        </button>
        <input ref={fileInput} type="file" accept=".json,application/json" className="visually-hidden" aria-label="Spec file to load" onChange={(e) => (e.target.files?.[0] ? void load(e.target.files[0]) : undefined)} />
        <button type="button" onClick={onSaveSpec}>
          Save the spec as JSON
        </button>
      </div>
      <Group title="What is analysed">
        <label>
          Trait{' '}
          <select aria-label="Trait" value={draft.trait} onChange={(e) => set('trait', e.target.value)}>
            {traits.map((t) => (
              <option key={t.name} value={t.name}>
                {t.name} ({t.unit})
              </option>
            ))}
          </select>
        </label>
        <label>
          Transformation{' '}
          <select aria-label="Transformation" value={draft.transform} onChange={(e) => set('transform', e.target.value as SpecDraft['transform'])}>
            <option value="none">none</option>
            <option value="log">log (effects as ratios)</option>
            <option value="sqrt">square root (counts)</option>
            <option value="logit">logit (proportions)</option>
            <option value="arcsine-sqrt">arcsine square root (percentages)</option>
          </select>
        </label>
        <label>
          Control{' '}
          <select aria-label="Control treatment" value={draft.control} onChange={(e) => set('control', e.target.value)}>
            {protocol.treatments.map((t) => (
              <option key={t.code}>{t.code}</option>
            ))}
          </select>
        </label>
      </Group>
      <Group title="Contrasts" help="Each contrast is estimated in every trial that tested what it needs, then pooled across trials.">
        {draft.contrasts.map((c, i) => (
          <ContrastEditor
            key={i}
            index={i}
            draft={c}
            protocol={protocol}
            otherNames={names.filter((_, j) => j !== i)}
            onChange={(d) => set('contrasts', draft.contrasts.map((x, j) => (j === i ? d : x)))}
            onRemove={() => set('contrasts', draft.contrasts.filter((_, j) => j !== i))}
          />
        ))}
        <div className="row-fields" role="group" aria-label="Add a contrast">
          <span>Add:</span>
          <button type="button" className="small" onClick={() => addContrast('coefficients')}>
            Coefficient table
          </button>
          <button type="button" className="small" onClick={() => addContrast('levels')}>
            Two levels of a factor
          </button>
          <button type="button" className="small" onClick={() => addContrast('trend')}>
            Trend over a rate
          </button>
          <button type="button" className="small" onClick={() => addContrast('treated-vs-control')}>
            Treated against control
          </button>
        </div>
        <label>
          Pairwise comparisons of all treatments{' '}
          <select aria-label="Pairwise comparisons" value={draft.pairwise} onChange={(e) => set('pairwise', e.target.value as SpecDraft['pairwise'])}>
            <option value="none">none</option>
            <option value="tukey">Tukey adjustment</option>
            <option value="holm">Holm adjustment</option>
          </select>
        </label>
      </Group>
      <Group title="Pooling trial estimates (two-stage)">
        <label>
          <input type="checkbox" checked={draft.twoStage !== null} onChange={(e) => set('twoStage', e.target.checked ? { tau2: 'reml', interval: 'hksj' } : null)} /> pool the contrasts
        </label>
        {draft.twoStage ? (
          <>
            <label>
              tau² estimator{' '}
              <select aria-label="tau² estimator" value={draft.twoStage.tau2} onChange={(e) => set('twoStage', { ...draft.twoStage!, tau2: e.target.value as 'reml' })}>
                <option value="reml">REML</option>
                <option value="ml">ML</option>
                <option value="dl">DerSimonian–Laird</option>
                <option value="pm">Paule–Mandel</option>
                <option value="fixed">none (fixed effect)</option>
              </select>
            </label>
            <label>
              Interval{' '}
              <select aria-label="Interval method" value={draft.twoStage.interval} onChange={(e) => set('twoStage', { ...draft.twoStage!, interval: e.target.value as 'hksj' })}>
                <option value="hksj">Hartung–Knapp–Sidik–Jonkman</option>
                <option value="wald">Wald (normal)</option>
              </select>
            </label>
          </>
        ) : null}
      </Group>
      <Group title="Mixed model on all plots (one-stage)">
        <label>
          <input type="checkbox" checked={draft.oneStage !== null} onChange={(e) => set('oneStage', e.target.checked ? { random: ['trial', 'block', 'treatment-by-trial'], residual: 'common', df: 'satterthwaite' } : null)} /> fit the one-stage model
        </label>
        {draft.oneStage ? (
          <>
            <div className="row-fields" role="group" aria-label="Random terms">
              Random terms:
              {RANDOM_TERMS.map((t) => (
                <label key={t}>
                  <input
                    type="checkbox"
                    aria-label={`Random term ${t}`}
                    checked={draft.oneStage!.random.includes(t)}
                    onChange={(e) => set('oneStage', { ...draft.oneStage!, random: e.target.checked ? [...draft.oneStage!.random, t].sort((a, b) => RANDOM_TERMS.indexOf(a as never) - RANDOM_TERMS.indexOf(b as never)) : draft.oneStage!.random.filter((x) => x !== t) })}
                  />{' '}
                  {t}
                </label>
              ))}
            </div>
            <label>
              Residual variance{' '}
              <select aria-label="Residual variance" value={draft.oneStage.residual} onChange={(e) => set('oneStage', { ...draft.oneStage!, residual: e.target.value as 'common' })}>
                <option value="common">common to all trials</option>
                <option value="per-trial">one per trial</option>
              </select>
            </label>
            <label>
              Degrees of freedom{' '}
              <select aria-label="Degrees of freedom" value={draft.oneStage.df} onChange={(e) => set('oneStage', { ...draft.oneStage!, df: e.target.value as 'satterthwaite' })}>
                <option value="satterthwaite">Satterthwaite</option>
                <option value="kenward-roger">Kenward–Roger</option>
                <option value="residual">residual</option>
              </select>
            </label>
          </>
        ) : null}
      </Group>
      <Group title="Moderators and break-even" help="Site or trial covariates that might explain why the effect differs between site-years.">
        <div className="row-fields" role="group" aria-label="Moderators">
          {covariateNames.length === 0 ? <span className="muted">No covariates recorded.</span> : null}
          {covariateNames.map((m) => (
            <label key={m}>
              <input type="checkbox" aria-label={`Moderator ${m}`} checked={draft.moderators.includes(m)} onChange={(e) => set('moderators', e.target.checked ? [...draft.moderators, m] : draft.moderators.filter((x) => x !== m))} /> {m}
            </label>
          ))}
        </div>
        <label>
          Break-even effect ({trait?.unit ?? 'trait units'}){' '}
          <input type="number" step="any" aria-label="Break-even threshold" value={draft.threshold} onChange={(e) => set('threshold', Number(e.target.value))} />
        </label>
      </Group>
      <Group title="Response to rate and economic optimum">
        <label>
          <input type="checkbox" aria-label="Fit rate responses" checked={draft.rate !== null} onChange={(e) => set('rate', e.target.checked ? { factor: numericFactors[0]?.name ?? '', model: 'quadratic', inputPrice: 1, cropPrice: 200, at: {}, profitableWithin: 0, bootstrap: 0, seed: 1 } : null)} /> fit response curves
        </label>
        {draft.rate ? <RateFields draft={draft} protocol={protocol} yieldUnit={trait?.unit ?? 'yield unit'} onChange={(r) => set('rate', r)} /> : null}
      </Group>
      <details className="spec-preview">
        <summary>The spec as JSON (what the command reads)</summary>
        <pre data-testid="spec-json">{JSON.stringify(draftToSpec(draft), null, 2)}</pre>
      </details>
    </div>
  );
}

function RateFields({ draft, protocol, yieldUnit, onChange }: { draft: SpecDraft; protocol: ProtocolShape; yieldUnit: string; onChange: (r: NonNullable<SpecDraft['rate']>) => void }) {
  const r = draft.rate!;
  const factor = protocol.factors.find((f) => f.name === r.factor);
  const rateUnit = factor?.unit ?? 'rate unit';
  const others = protocol.factors.filter((f) => f.name !== r.factor);
  return (
    <>
      <label>
        Rate factor{' '}
        <select aria-label="Rate factor" value={r.factor} onChange={(e) => onChange({ ...r, factor: e.target.value })}>
          {protocol.factors.filter((f) => f.kind === 'numeric').map((f) => (
            <option key={f.name}>{f.name}</option>
          ))}
        </select>
      </label>
      <label>
        Curve{' '}
        <select aria-label="Response curve" value={r.model} onChange={(e) => onChange({ ...r, model: e.target.value as typeof r.model })}>
          <option value="quadratic">quadratic</option>
          <option value="linear-plateau">linear then plateau</option>
          <option value="quadratic-plateau">quadratic then plateau</option>
          <option value="exponential">exponential rise to a maximum</option>
          <option value="linear">straight line</option>
          <option value="best">best per trial (AICc)</option>
        </select>
      </label>
      {others.map((f) => (
        <label key={f.name}>
          At {f.name}{' '}
          <select aria-label={`Rate curves at ${f.name}`} value={r.at[f.name] ?? ''} onChange={(e) => onChange({ ...r, at: { ...r.at, [f.name]: e.target.value } })}>
            <option value="">all levels pooled</option>
            {factorLevels(protocol, f.name).map((v) => (
              <option key={String(v)}>{String(v)}</option>
            ))}
          </select>
        </label>
      ))}
      <div className="row-fields">
        <label>
          Input price per {rateUnit}{' '}
          <input type="number" step="any" min="0" aria-label="Input price" value={r.inputPrice} onChange={(e) => onChange({ ...r, inputPrice: Number(e.target.value) })} />
        </label>
        <label>
          Crop price per {yieldUnit}{' '}
          <input type="number" step="any" min="0" aria-label="Crop price" value={r.cropPrice} onChange={(e) => onChange({ ...r, cropPrice: Number(e.target.value) })} />
        </label>
        <span className="small-text" data-testid="price-ratio">
          Price ratio {Number(priceRatio(r.inputPrice, r.cropPrice).toPrecision(4))} {yieldUnit} per {rateUnit}: the gain one {rateUnit} must bring to pay for itself.
        </span>
      </div>
      <label>
        Profitable band: within{' '}
        <input type="number" step="any" min="0" aria-label="Profitable within" value={r.profitableWithin} onChange={(e) => onChange({ ...r, profitableWithin: Number(e.target.value) })} /> {yieldUnit} of the best net return
      </label>
      <label>
        Bootstrap resamples for the optimum's interval{' '}
        <input type="number" min="0" max="10000" step="1" aria-label="Bootstrap resamples" value={r.bootstrap} onChange={(e) => onChange({ ...r, bootstrap: Math.round(Number(e.target.value)) })} />
      </label>
      <label>
        Seed{' '}
        <input type="number" step="1" aria-label="Bootstrap seed" value={r.seed} onChange={(e) => onChange({ ...r, seed: Math.round(Number(e.target.value)) })} />
      </label>
    </>
  );
}
