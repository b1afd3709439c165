// The shared charts drawn to SVG text, for the report (bundled by scripts/bundle.js into
// dist/cli/reportCharts.cjs and loaded by src/report/html/loadCharts.ts).
import { renderToStaticMarkup } from 'react-dom/server';
import type { ForestData, RateData } from '../../../src/report/charts/chartData.js';
import { ForestChart } from './ForestChart.js';
import { RateChart } from './RateChart.js';

export function forest(data: ForestData): string {
  return renderToStaticMarkup(<ForestChart {...data} />);
}

export function rate(data: RateData): string {
  return renderToStaticMarkup(<RateChart {...data} />);
}
