// The analyses stored in the workspace: open (without recomputing), run again, write the report,
// rename, delete, and pick two to compare.
import { useState } from 'react';
import type { HandlerResults } from '../host/types.js';
import { formatNumber } from '../shape/format.js';

export type SavedListing = HandlerResults['analysis.list'][number];

interface Props {
  readonly list: readonly SavedListing[];
  readonly onOpen: (id: number) => void;
  readonly onRerun: (id: number) => void;
  readonly onRename: (id: number, name: string) => void;
  readonly onDelete: (id: number) => void;
  readonly onCompare: (a: number, b: number) => void;
  /** Write the recommendation report of an analysis; null while one is being written. */
  readonly onReport: ((id: number) => void) | null;
}

export function savedTitle(a: { id: number; name?: string | null; trait?: string | null; createdAt: string }): string {
  return a.name ?? `Analysis ${a.id}${a.trait ? ` of ${a.trait}` : ''}`;
}

export function SavedAnalyses({ list, onOpen, onRerun, onRename, onDelete, onCompare, onReport }: Props) {
  const [picked, setPicked] = useState<number[]>([]);
  const [editing, setEditing] = useState<{ id: number; name: string } | null>(null);
  const toggle = (id: number) => setPicked((p) => (p.includes(id) ? p.filter((x) => x !== id) : [...p.slice(-1), id]));
  if (list.length === 0) return <p className="muted">No analysis saved yet: every run is saved here with its spec and the fingerprint of its data.</p>;
  return (
    <div data-testid="saved-analyses">
      <div className="row-fields">
        <button type="button" disabled={picked.length !== 2} onClick={() => onCompare(picked[0], picked[1])}>
          Compare the two ticked
        </button>
        <span className="small-text muted">Tick two analyses to compare their specs, data and numbers.</span>
      </div>
      <table className="data">
        <thead>
          <tr>
            <th>Compare</th>
            <th>Analysis</th>
            <th>Run on</th>
            <th>Trials</th>
            <th>Data fingerprint</th>
            <th>App version</th>
            <th>Actions</th>
          </tr>
        </thead>
        <tbody>
          {list.map((a) => (
            <tr key={a.id} data-testid="saved-row" data-id={a.id}>
              <td>
                <input type="checkbox" aria-label={`Compare ${savedTitle(a)}`} checked={picked.includes(a.id)} onChange={() => toggle(a.id)} />
              </td>
              <td>
                {editing?.id === a.id ? (
                  <form
                    onSubmit={(e) => {
                      e.preventDefault();
                      onRename(a.id, editing.name);
                      setEditing(null);
                    }}
                  >
                    <input aria-label={`New name for analysis ${a.id}`} value={editing.name} onChange={(e) => setEditing({ id: a.id, name: e.target.value })} autoFocus />
                    <button type="submit" className="small">
                      Save name
                    </button>
                  </form>
                ) : (
                  <strong>{savedTitle(a)}</strong>
                )}
                {a.status !== 'complete' ? <span className="tag">{a.status}</span> : null}
              </td>
              <td>{new Date(a.createdAt).toLocaleString('en-GB')}</td>
              <td>{a.trials === null ? '–' : formatNumber(a.trials, 0)}</td>
              <td className="mono" title={a.dataFingerprint}>
                {a.dataFingerprint.slice(0, 12)}…
              </td>
              <td>{a.appVersion}</td>
              <td className="actions">
                <button type="button" className="small" onClick={() => onOpen(a.id)} aria-label={`Open ${savedTitle(a)}`}>
                  Open
                </button>
                <button type="button" className="small" onClick={() => onRerun(a.id)} aria-label={`Run ${savedTitle(a)} again`}>
                  Run again
                </button>
                <button type="button" className="small" disabled={onReport === null} onClick={() => onReport?.(a.id)} aria-label={`Write the report of ${savedTitle(a)}`}>
                  Report
                </button>
                <button type="button" className="small" onClick={() => setEditing({ id: a.id, name: a.name ?? '' })} aria-label={`Rename ${savedTitle(a)}`}>
                  Rename
                </button>
                <button
                  type="button"
                  className="small"
                  onClick={() => (window.confirm(`Delete ${savedTitle(a)}? Its results are removed from the workspace.`) ? onDelete(a.id) : undefined)}
                  aria-label={`Delete ${savedTitle(a)}`}
                >
                  Delete
                </button>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
