// Tolerance helpers shared by the trial tests.
import { expect } from 'vitest';

/** |a - b| <= rel * max(|b|, floor): relative, with an absolute floor for values near zero. */
export function expectClose(actual: number | null | undefined, expected: number, rel: number, floor: number, label: string): void {
  if (Number.isNaN(expected)) {
    // R's NaN/NA (undefined quantity) is the engine's null.
    if (actual !== null) expect.fail(`${label}: reference is undefined (NaN), engine gave ${actual}`);
    return;
  }
  if (actual === null || actual === undefined) throw new Error(`${label}: engine gave ${actual}, R gave ${expected}`);
  const tol = rel * Math.max(Math.abs(expected), floor);
  if (!(Math.abs(actual - expected) <= tol)) expect.fail(`${label}: engine ${actual} vs reference ${expected} (|diff| ${Math.abs(actual - expected)} > ${tol})`);
}
