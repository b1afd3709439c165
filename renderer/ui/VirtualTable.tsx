// A table body that draws only the rows in view once the list is long; short lists are drawn
// whole. Rows have one fixed height (set in the stylesheet through --row-height).
import { useState, type ReactNode } from 'react';
import { visibleRows } from '../shape/virtualWindow.js';

/** Lists up to this long are drawn whole (cheap, and every row is reachable by find-in-page). */
export const DRAW_WHOLE_UP_TO = 60;

interface Props<Row> {
  readonly rows: readonly Row[];
  readonly rowHeight: number;
  /** Height of the scrolling area in px. */
  readonly height: number;
  readonly head: ReactNode;
  readonly columns: number;
  readonly renderRow: (row: Row, index: number) => ReactNode;
  readonly label: string;
  readonly testId?: string;
  readonly className?: string;
}

export function VirtualTable<Row>({ rows, rowHeight, height, head, columns, renderRow, label, testId, className }: Props<Row>) {
  const [scrollTop, setScrollTop] = useState(0);
  const whole = rows.length <= DRAW_WHOLE_UP_TO;
  const w = whole ? { first: 0, end: rows.length, padTop: 0, padBottom: 0 } : visibleRows(rows.length, rowHeight, scrollTop, height);
  return (
    <div className={`table-scroll ${whole ? '' : 'virtualised'} ${className ?? ''}`} style={{ maxHeight: height }} onScroll={(e) => setScrollTop(e.currentTarget.scrollTop)} tabIndex={-1}>
      <table className="data-table" data-testid={testId} aria-label={label} aria-rowcount={rows.length + 1}>
        <thead>{head}</thead>
        <tbody>
          {w.padTop > 0 ? (
            <tr aria-hidden="true" style={{ height: w.padTop }}>
              <td colSpan={columns} />
            </tr>
          ) : null}
          {rows.slice(w.first, w.end).map((r, i) => renderRow(r, w.first + i))}
          {w.padBottom > 0 ? (
            <tr aria-hidden="true" style={{ height: w.padBottom }}>
              <td colSpan={columns} />
            </tr>
          ) : null}
        </tbody>
      </table>
    </div>
  );
}
