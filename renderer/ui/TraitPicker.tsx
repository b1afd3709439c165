// The trait the screens show (yield, protein ...), with its unit.
import type { WorkspaceInfo } from '../app/views.js';

interface Props {
  readonly traits: WorkspaceInfo['traits'];
  readonly value: string;
  readonly onChange: (t: string) => void;
}

export function TraitPicker({ traits, value, onChange }: Props) {
  if (traits.length === 0) return null;
  return (
    <label className="trait-picker">
      <span>Trait</span>
      <select value={value} onChange={(e) => onChange(e.target.value)}>
        {traits.map((t) => (
          <option key={t.name} value={t.name}>
            {t.name} ({t.unit})
          </option>
        ))}
      </select>
    </label>
  );
}
