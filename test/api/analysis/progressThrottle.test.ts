import { describe, expect, it } from 'vitest';
import { throttleProgress, type ProgressLike } from '../../../src/api/analysis/progressThrottle.js';

describe('throttleProgress', () => {
  it('passes a new stage, the end of a stage and one event per interval; drops the rest', () => {
    let clock = 0;
    const sent: ProgressLike[] = [];
    const on = throttleProgress<ProgressLike>((e) => sent.push(e), 100, () => clock);
    on({ stage: 'trial-stage', fraction: 0 }); // first of a stage: passes
    for (let i = 1; i < 50; i++) {
      clock = i; // 49 events inside 100 ms: dropped
      on({ stage: 'trial-stage', fraction: i / 100 });
    }
    clock = 100;
    on({ stage: 'trial-stage', fraction: 0.5 }); // 100 ms after the last passed: passes
    clock = 101;
    on({ stage: 'trial-stage', fraction: 1 }); // end of the stage: passes
    on({ stage: 'one-stage', fraction: null }); // new stage: passes
    on({ stage: 'one-stage', fraction: null }); // same stage, no time gone: dropped
    expect(sent).toEqual([
      { stage: 'trial-stage', fraction: 0 },
      { stage: 'trial-stage', fraction: 0.5 },
      { stage: 'trial-stage', fraction: 1 },
      { stage: 'one-stage', fraction: null },
    ]);
  });
});
