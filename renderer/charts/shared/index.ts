// The charts the screens and the report draw with (pure SVG, no DOM hooks).
export { ForestChart, type ForestChartProps } from './ForestChart.js';
export { RateChart, type RateChartProps } from './RateChart.js';
export { forestLayout, markerSide, intervalText } from './forestLayout.js';
export { rateLayout, linePath } from './rateLayout.js';
export type { ForestData, ForestRow, RateData, RateCurveData, RatePoint } from '../../../src/report/charts/chartData.js';
