// Which column is what, the trait's name and unit, factors with their units, the design and
// the control. Starts from the guess made from the headers; every choice can be changed.
import { useId } from 'react';
import { COLUMN_ROLES, DESIGNS, ROLE_LABELS, TRAIT_UNITS, unusedHeaders, type ColumnRole, type MappingForm as Form } from '../shape/mapping.js';

interface Props {
  readonly header: readonly string[];
  readonly form: Form;
  readonly onChange: (f: Form) => void;
}

const REQUIRED: ReadonlySet<ColumnRole> = new Set(['treatment', 'response']);

export function MappingForm({ header, form, onChange }: Props) {
  const id = useId();
  const setColumn = (role: ColumnRole, column: string) => onChange({ ...form, columns: { ...form.columns, [role]: column } });
  const spare = unusedHeaders(header, form);
  return (
    <fieldset className="mapping-form" data-testid="mapping-form">
      <legend>Columns</legend>
      <div className="mapping-grid">
        {COLUMN_ROLES.map((role) => (
          <label key={role} className="field">
            <span>
              {ROLE_LABELS[role]}
              {REQUIRED.has(role) ? <span className="required"> (required)</span> : null}
            </span>
            <select value={form.columns[role]} onChange={(e) => setColumn(role, e.target.value)} data-role={role}>
              <option value="">— not in this file —</option>
              {header.map((h) => (
                <option key={h} value={h}>
                  {h}
                </option>
              ))}
            </select>
          </label>
        ))}
      </div>
      <div className="mapping-grid">
        <label className="field">
          <span>Trait name</span>
          <input value={form.traitName} onChange={(e) => onChange({ ...form, traitName: e.target.value })} />
        </label>
        <label className="field">
          <span>Unit of the values in the file</span>
          <select value={form.traitUnit} onChange={(e) => onChange({ ...form, traitUnit: e.target.value })}>
            {TRAIT_UNITS.map((u) => (
              <option key={u} value={u}>
                {u}
              </option>
            ))}
          </select>
        </label>
        {form.traitUnit === 'bu/ac' ? (
          <label className="field">
            <span>Crop (for the bushel weight)</span>
            <input value={form.crop} onChange={(e) => onChange({ ...form, crop: e.target.value })} />
          </label>
        ) : null}
        {form.columns.design ? null : (
          <label className="field">
            <span>Design of every trial</span>
            <select value={form.design} onChange={(e) => onChange({ ...form, design: e.target.value as Form['design'] })}>
              {DESIGNS.map((d) => (
                <option key={d} value={d}>
                  {d.replace(/-/g, ' ')}
                </option>
              ))}
            </select>
          </label>
        )}
        <label className="field">
          <span>Control treatment code (optional)</span>
          <input value={form.control} onChange={(e) => onChange({ ...form, control: e.target.value })} placeholder="e.g. CTL" />
        </label>
      </div>
      <div className="factors">
        <p className="field-title">Treatment factors</p>
        {form.factors.length === 0 ? <p className="muted">None chosen.</p> : null}
        {form.factors.map((f, i) => (
          <div key={f.column} className="factor-row" role="group" aria-label={`Factor from column ${f.column}`}>
            <span className="mono">{f.column}</span>
            <label>
              <span className="visually-hidden">Name of the factor from {f.column}</span>
              <input value={f.name} onChange={(e) => onChange({ ...form, factors: form.factors.map((g, j) => (j === i ? { ...g, name: e.target.value } : g)) })} aria-label={`Name of the factor from ${f.column}`} />
            </label>
            <label>
              <span className="visually-hidden">Unit of {f.column}</span>
              <input value={f.unit} placeholder="unit if numeric, e.g. kg/ha" size={22} onChange={(e) => onChange({ ...form, factors: form.factors.map((g, j) => (j === i ? { ...g, unit: e.target.value } : g)) })} aria-label={`Unit of ${f.column}`} />
            </label>
            <button type="button" className="small" onClick={() => onChange({ ...form, factors: form.factors.filter((_, j) => j !== i) })} aria-label={`Remove factor ${f.column}`}>
              Remove
            </button>
          </div>
        ))}
        {spare.length > 0 ? (
          <label className="field inline">
            <span>Add a factor column</span>
            <select
              id={`${id}-add-factor`}
              value=""
              onChange={(e) => e.target.value && onChange({ ...form, factors: [...form.factors, { name: e.target.value.toLowerCase().replace(/\s*[([].*$/, ''), column: e.target.value, unit: '' }] })}
            >
              <option value="">— choose —</option>
              {spare.map((h) => (
                <option key={h} value={h}>
                  {h}
                </option>
              ))}
            </select>
          </label>
        ) : null}
      </div>
    </fieldset>
  );
}
