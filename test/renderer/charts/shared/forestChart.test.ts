// The forest plot's layout and its static rendering (as the report inlines it). Checks are
// geometric identities computed here from the inputs (common practice, no outside source):
// marker AREA proportional to weight, positions on a linear axis, one row group per trial.
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { ForestChart } from '../../../../renderer/charts/shared/ForestChart.js';
import { forestLayout, markerSide, MIN_MARKER } from '../../../../renderer/charts/shared/forestLayout.js';
import type { ForestData } from '../../../../src/report/charts/chartData.js';

const data: ForestData = {
  rows: [
    { trial: 'A-2021', site: 'A', year: 2021, estimate: 1.2, lower: 0.4, upper: 2.0, weightShare: 0.5 },
    { trial: 'B-2021', site: 'B', year: 2021, estimate: -0.3, lower: -1.5, upper: 0.9, weightShare: 0.125 },
    { trial: 'C-2022', site: 'C', year: 2022, estimate: 2.4, lower: 1.1, upper: 3.7, weightShare: 0.375 },
  ],
  pooled: { estimate: 1.1, lower: 0.2, upper: 2.0 },
  prediction: { lower: -1.0, upper: 3.2 },
  threshold: 0.5,
  unit: 't/ha',
  width: 720,
};

describe('forest layout', () => {
  it('makes marker areas proportional to the weight shares (1e-9)', () => {
    const L = forestLayout(data);
    const areas = L.rows.map((r) => r.side ** 2);
    expect(areas[1] / areas[0]).toBeCloseTo(0.125 / 0.5, 9);
    expect(areas[2] / areas[0]).toBeCloseTo(0.375 / 0.5, 9);
    expect(markerSide(0, 1)).toBe(MIN_MARKER);
  });

  it('places estimates, zero and threshold on one linear axis (1e-9)', () => {
    const L = forestLayout(data);
    const [a, b] = L.rows;
    const k = (a.cx - b.cx) / (1.2 - -0.3);
    expect(L.zeroX).toBeCloseTo(b.cx + 0.3 * k, 9);
    expect(L.thresholdX).toBeCloseTo(L.zeroX + 0.5 * k, 9);
    expect(L.prediction!.x1).toBeCloseTo(L.zeroX - 1.0 * k, 9);
    for (const r of L.rows) {
      expect(r.x1).toBeLessThanOrEqual(r.cx);
      expect(r.x2).toBeGreaterThanOrEqual(r.cx);
      expect(r.x1).toBeGreaterThanOrEqual(L.plotLeft);
      expect(r.x2).toBeLessThanOrEqual(L.plotRight);
    }
  });

  it('stacks rows top to bottom in the caller order, then the pooled row, then the prediction', () => {
    const L = forestLayout(data);
    expect(L.rows.map((r) => r.row.trial)).toEqual(['A-2021', 'B-2021', 'C-2022']);
    expect(L.rows[1].y).toBeGreaterThan(L.rows[0].y);
    expect(L.pooled!.y).toBeGreaterThan(L.rows[2].y);
    expect(L.prediction!.y).toBeGreaterThan(L.pooled!.y);
    expect(L.height).toBeGreaterThan(L.axisY);
  });

  it('draws no threshold line at zero and no prediction when there is none', () => {
    const L = forestLayout({ ...data, threshold: 0, prediction: null });
    expect(L.thresholdX).toBeNull();
    expect(L.prediction).toBeNull();
  });
});

describe('ForestChart rendered without a DOM', () => {
  it('renders one svg with one row group per trial and labelled pooled and prediction marks', () => {
    const html = renderToStaticMarkup(createElement(ForestChart, data));
    expect(html.startsWith('<svg')).toBe(true);
    expect(html.match(/data-testid="forest-plot"/g)).toHaveLength(1);
    expect(html.match(/data-testid="forest-row"/g)).toHaveLength(3);
    expect(html).toContain('data-testid="forest-prediction"');
    expect(html).toContain('data-testid="forest-threshold"');
    expect(html).toContain('New site (prediction)');
    expect(html).toContain('1.10 (0.20 to 2.00)');
    expect(html).not.toMatch(/https?:\/\/(?!www\.w3\.org\/2000\/svg)/);
  });
});
