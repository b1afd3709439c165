// Progress from the analysis worker to its caller: every post is a structured copy and a wake-up
// of the caller's thread, and the trial stage alone reports once per trial (4,000 posts cost
// about a second at that size). A caller's progress bar needs a few updates a second: an event
// passes when its stage differs from the last one passed, when it is the last of a stage
// (fraction 1), or when `everyMs` have gone by; the others are dropped.
export interface ProgressLike {
  readonly stage: string;
  readonly fraction: number | null;
}

export function throttleProgress<E extends ProgressLike>(send: (event: E) => void, everyMs = 100, now: () => number = Date.now): (event: E) => void {
  let lastStage: string | null = null;
  let lastAt = -Infinity;
  return (event) => {
    const t = now();
    if (event.stage === lastStage && event.fraction !== 1 && t - lastAt < everyMs) return;
    lastStage = event.stage;
    lastAt = t;
    send(event);
  };
}
