// Input checks for pooling: every estimate and SE finite, every SE positive, trial names
// unique, the options in range. Errors name the trial and the rule broken.
import type { PoolingItem, PoolingOptions } from './types.js';

export class PoolingInputError extends Error {
  constructor(message: string, readonly details: Record<string, unknown> = {}) {
    super(message);
    this.name = 'PoolingInputError';
  }
}

export function validatePooling(items: readonly PoolingItem[], options: PoolingOptions): void {
  if (items.length === 0) throw new PoolingInputError('Nothing to pool: no trials were given.');
  const seen = new Set<string>();
  items.forEach((it, index) => {
    const where = `trial "${it.trial}" (item ${index + 1})`;
    if (seen.has(it.trial)) throw new PoolingInputError(`Duplicate trial name ${where}: each trial may appear once per contrast.`, { trial: it.trial, index });
    seen.add(it.trial);
    if (!Number.isFinite(it.estimate)) throw new PoolingInputError(`Estimate of ${where} is ${it.estimate}: it must be a finite number.`, { trial: it.trial, index, value: it.estimate });
    if (!Number.isFinite(it.se) || it.se <= 0) throw new PoolingInputError(`Standard error of ${where} is ${it.se}: it must be a finite number greater than zero.`, { trial: it.trial, index, value: it.se });
  });
  if (!(options.confidence > 0 && options.confidence < 1)) throw new PoolingInputError(`Confidence level ${options.confidence} must lie strictly between 0 and 1.`, { confidence: options.confidence });
  if (!Number.isFinite(options.threshold)) throw new PoolingInputError(`Threshold ${options.threshold} must be a finite number.`, { threshold: options.threshold });
  if (options.prediction !== undefined && options.prediction !== 'bootstrap-tau2' && options.prediction !== 'plug-in-t')
    throw new PoolingInputError(`New-site prediction method "${String(options.prediction)}" is not known: use "bootstrap-tau2" or "plug-in-t".`, { prediction: options.prediction });
  const draws = options.predictionDraws;
  if (draws !== undefined && !(Number.isInteger(draws) && draws >= 1000)) throw new PoolingInputError(`predictionDraws ${draws} must be a whole number of at least 1000.`, { predictionDraws: draws });
  const seed = options.predictionSeed;
  if (seed !== undefined && !(Number.isInteger(seed) && seed >= 0 && seed <= 4294967295)) throw new PoolingInputError(`predictionSeed ${seed} must be a whole number from 0 to 4294967295.`, { predictionSeed: seed });
}
