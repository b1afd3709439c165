export { analyzeRateResponse, SENSITIVITY_MULTIPLIERS, SITE_QUANTILES } from './analyzeRateResponse.js';
export { formatRateResponseText } from './formatRateResponseText.js';
export { RateResponseInputError } from './errors.js';
export * from './types.js';
