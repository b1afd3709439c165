import { describe, expect, it } from 'vitest';
import { cooksBars, meansByPosition, normalQuantiles, qqReferenceLine, residualsAgainstFitted, residualsAlong, type DiagnosticPlotInput } from '../../../renderer/shape/diagnostics.js';

function plot(id: number, o: Partial<DiagnosticPlotInput> = {}): DiagnosticPlotInput {
  return { id, label: `P${id}`, treatment: 'A', row: id, col: 1, excluded: false, fitted: 5, residual: id - 2, studentised: (id - 2) / 2, cooks: id / 10, normalScore: id - 2, ...o };
}

describe('diagnostic rows', () => {
  const plots = [plot(3), plot(1), plot(2), plot(4, { excluded: true }), plot(5, { fitted: null, residual: null })];

  it('leaves out excluded plots and plots not in the fit', () => {
    expect(residualsAgainstFitted(plots).map((p) => p.plot)).toEqual([3, 1, 2]);
  });

  it('sorts the QQ points by normal score and draws the y = x line across them', () => {
    const qq = normalQuantiles(plots);
    expect(qq.map((p) => p.x)).toEqual([-1, 0, 1]);
    expect(qqReferenceLine(qq)).toEqual([
      { x: -1, y: -1 },
      { x: 1, y: 1 },
    ]);
    expect(qqReferenceLine(qq.slice(0, 1))).toBeNull();
  });

  it("marks Cook's distances above the threshold", () => {
    expect(cooksBars(plots, 0.25).map((b) => [b.plot, b.above])).toEqual([
      [3, true],
      [1, false],
      [2, false],
    ]);
  });

  it('averages residuals per field position', () => {
    const along = residualsAlong([plot(1, { row: 1, residual: 1 }), plot(2, { row: 1, residual: 3 }), plot(3, { row: 2, residual: -1 }), plot(6, { row: null })], 'row');
    expect(along).toHaveLength(3);
    expect(meansByPosition(along)).toEqual([
      { position: 1, mean: 2, n: 2 },
      { position: 2, mean: -1, n: 1 },
    ]);
  });
});
