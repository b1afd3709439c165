// Every problem found in the file: the row as a spreadsheet numbers it, the column, the value
// and the rule it broke, with the plain message. Long lists scroll without drawing every row.
import type { ValidationProblem } from '../app/views.js';
import { VirtualTable } from '../ui/VirtualTable.js';

export function ProblemTable({ problems, truncated }: { problems: readonly ValidationProblem[]; truncated: boolean }) {
  const head = (
    <tr>
      <th scope="col" className="num">
        Row
      </th>
      <th scope="col">Column</th>
      <th scope="col">Value</th>
      <th scope="col">Rule</th>
      <th scope="col">What to fix</th>
    </tr>
  );
  return (
    <>
      <VirtualTable
        rows={problems}
        rowHeight={34}
        height={300}
        columns={5}
        head={head}
        label="Problems found in the file"
        testId="import-errors"
        className="problem-table"
        renderRow={(p, i) => (
          <tr key={i} data-testid="import-error-row" data-row={p.row} data-column={p.column ?? ''}>
            <td className="num">{p.row > 0 ? p.row : 'file'}</td>
            <td>{p.column ?? '–'}</td>
            <td className="mono">{p.value === null ? '–' : p.value === '' ? '(empty)' : p.value}</td>
            <td>
              <code>{p.rule}</code>
            </td>
            <td className="ellipsis" title={p.message}>
              {p.message}
            </td>
          </tr>
        )}
      />
      {truncated ? <p className="muted">More problems exist than are listed; fix these and check again.</p> : null}
    </>
  );
}
