export { poolEstimates, fitSettings } from './poolEstimates.js';
export { poolCore } from './poolCore.js';
export type { CorePool } from './poolCore.js';
export { PoolingInputError } from './validateItems.js';
export { summarisePooled } from './summaryText.js';
export type * from './types.js';
