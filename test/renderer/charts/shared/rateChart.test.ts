// The rate chart's layout and static rendering: a path through the given points on linear
// axes, the profitable range and optimum placed on the same rate axis (geometric identities,
// computed here from the inputs).
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { RateChart } from '../../../../renderer/charts/shared/RateChart.js';
import { linePath, rateLayout } from '../../../../renderer/charts/shared/rateLayout.js';
import type { RateData } from '../../../../src/report/charts/chartData.js';

const curve = (f: (x: number) => number) => [0, 40, 80, 120, 160].map((rate) => ({ rate, value: f(rate) }));
const data: RateData = {
  width: 640,
  rateUnit: 'kg/ha',
  yieldUnit: 't/ha',
  trials: [
    { id: 't1', label: 'A 2021', points: curve((x) => 0.02 * x - 0.00006 * x * x) },
    { id: 't2', label: 'B 2021', points: curve((x) => 0.015 * x - 0.00005 * x * x) },
  ],
  pooled: { id: 'pooled', label: 'pooled', points: curve((x) => 0.0175 * x - 0.000055 * x * x) },
  netReturn: curve((x) => 0.0175 * x - 0.000055 * x * x - 0.004 * x),
  optimum: { rate: 122.7, lower: 100, upper: 150 },
  profitable: { lower: 95, upper: 150 },
};

describe('rate layout', () => {
  it('draws a path through every point and breaks it at a missing value', () => {
    const id = (v: number) => v;
    expect(linePath([{ rate: 0, value: 1 }, { rate: 2, value: 3 }], id, id)).toBe('M0.0,1.0L2.0,3.0');
    expect(linePath([{ rate: 0, value: 1 }, { rate: 1, value: Number.NaN }, { rate: 2, value: 3 }], id, id)).toBe('M0.0,1.0M2.0,3.0');
  });

  it('puts the optimum, its interval and the profitable range on the rate axis (1e-9)', () => {
    const L = rateLayout(data);
    const k = (L.right - L.left) / 160;
    expect(L.optimum!.x).toBeCloseTo(L.left + 122.7 * k, 9);
    expect(L.optimum!.x1).toBeCloseTo(L.left + 100 * k, 9);
    expect(L.profitable!.x2).toBeCloseTo(L.left + 150 * k, 9);
    expect(L.net.top).toBeGreaterThan(L.gain.bottom);
    expect(L.trialPaths).toHaveLength(2);
  });
});

describe('RateChart rendered without a DOM', () => {
  it('renders both panels, the curves, the optimum and the profitable range with text labels', () => {
    const html = renderToStaticMarkup(createElement(RateChart, data));
    expect(html.match(/<svg/g)).toHaveLength(1);
    expect(html).toContain('data-testid="rate-pooled-curve"');
    expect(html).toContain('data-testid="rate-net-curve"');
    expect(html).toContain('optimum 123 kg/ha (100 to 150)');
    expect(html).toContain('near-best rates');
  });
});
