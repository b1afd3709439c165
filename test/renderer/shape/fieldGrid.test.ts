import { describe, expect, it } from 'vitest';
import { layoutFieldGrid, type GridPlotInput } from '../../../renderer/shape/fieldGrid.js';
import { EXCLUDED_FILL, MISSING_FILL } from '../../../renderer/shape/palette.js';

function plot(id: number, o: Partial<GridPlotInput> = {}): GridPlotInput {
  return { id, label: String(id), treatment: 'T', block: null, row: null, col: null, value: id, residual: id - 2.5, excluded: false, ...o };
}

describe('field grid layout', () => {
  it('places plots by row and column from the smallest recorded ones', () => {
    const g = layoutFieldGrid([plot(1, { row: 2, col: 3 }), plot(2, { row: 2, col: 4 }), plot(3, { row: 3, col: 3 })], 'value');
    expect(g.basis).toBe('row-column');
    expect(g.rows).toBe(2);
    expect(g.cols).toBe(2);
    expect(g.cells.map((c) => [c.gridRow, c.gridCol])).toEqual([
      [0, 0],
      [0, 1],
      [1, 0],
    ]);
    expect(g.rowLabels).toEqual(['Row 2', 'Row 3']);
  });

  it('falls back to one line per block when positions are missing', () => {
    const g = layoutFieldGrid([plot(1, { block: 'I' }), plot(2, { block: 'II' }), plot(3, { block: 'I', row: 1, col: 1 })], 'value');
    expect(g.basis).toBe('block-position');
    expect(g.rowLabels).toEqual(['Block I', 'Block II']);
    expect(g.cells.map((c) => [c.gridRow, c.gridCol])).toEqual([
      [0, 0],
      [1, 0],
      [0, 1],
    ]);
  });

  it('marks excluded and missing plots and leaves them out of the colour range', () => {
    const g = layoutFieldGrid([plot(1, { value: 1 }), plot(2, { value: 3 }), plot(3, { value: 100, excluded: true }), plot(4, { value: null, residual: null })], 'value');
    expect(g.cells[2].state).toBe('excluded');
    expect(g.cells[2].fill).toBe(EXCLUDED_FILL);
    expect(g.cells[3].state).toBe('missing');
    expect(g.cells[3].fill).toBe(MISSING_FILL);
    expect(g.legend[0].value).toBe(1);
    expect(g.legend[g.legend.length - 1].value).toBe(3);
  });

  it('colours residuals on a range symmetric about zero', () => {
    const g = layoutFieldGrid([plot(1, { residual: -1 }), plot(2, { residual: 3 })], 'residual');
    expect(g.legend[0].value).toBe(-3);
    expect(g.legend[g.legend.length - 1].value).toBe(3);
    expect(g.legend[2].value).toBe(0);
    expect(g.cells[0].fill).not.toBe(g.cells[1].fill);
  });
});
