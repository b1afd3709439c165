// Records keyed by user-chosen names (covariates, factor levels, coefficients) must answer only
// with their own entries: a covariate called "toString" is data, not Object.prototype.toString.

/** record[key] when it is the record's own entry, else undefined. */
export function ownValue<T>(record: Readonly<Record<string, T>> | null | undefined, key: string): T | undefined {
  return record != null && Object.hasOwn(record, key) ? record[key] : undefined;
}
