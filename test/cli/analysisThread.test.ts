import { describe, expect, it } from 'vitest';
import { analyseInThisThread } from '../../src/cli/analysisThread.js';

describe('where analyze runs the analysis', () => {
  it('in this thread only for a plot file with no terminal on stderr', () => {
    expect(analyseInThisThread('plots.csv', { isTTY: false })).toBe(true);
    expect(analyseInThisThread('plots.csv', {})).toBe(true);
  });
  it('in a worker when a terminal can show progress and press Ctrl-C', () => {
    expect(analyseInThisThread('plots.csv', { isTTY: true })).toBe(false);
  });
  it('in a worker for a workspace (Ctrl-C must report that nothing was stored)', () => {
    expect(analyseInThisThread(undefined, { isTTY: false })).toBe(false);
  });
});
