// The first rows of the chosen file, as read, so the mapping can be checked against them.
import type { FilePreview } from '../app/views.js';

const SHOWN = 5;

export function PreviewTable({ preview }: { preview: FilePreview }) {
  return (
    <div className="table-scroll preview-scroll" tabIndex={0} aria-label="First rows of the file">
      <table className="data-table compact" data-testid="intake-preview">
        <caption className="visually-hidden">First {Math.min(SHOWN, preview.rows.length)} data rows of the file</caption>
        <thead>
          <tr>
            <th scope="col" className="num">
              Row
            </th>
            {preview.header.map((h, i) => (
              <th scope="col" key={`${h}-${i}`}>
                {h}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {preview.rows.slice(0, SHOWN).map((r, i) => (
            <tr key={i}>
              <td className="num muted">{i + 2}</td>
              {preview.header.map((_, j) => (
                <td key={j}>{r[j] ?? ''}</td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
