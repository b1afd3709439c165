// Run the built spec: progress by stage with a cancel button; the window stays responsive
// because the work runs in the core's worker, not on the page.
import { progressText } from '../shape/progress.js';

export interface Running {
  readonly stage: string;
  readonly fraction: number | null;
  readonly step: string | null;
}

interface Props {
  readonly running: Running | null;
  readonly canRun: boolean;
  readonly why: string | null;
  readonly onRun: () => void;
  readonly onCancel: () => void;
}

export function RunBar({ running, canRun, why, onRun, onCancel }: Props) {
  return (
    <div className="run-bar" data-testid="run-bar">
      {running ? (
        <>
          <progress max={1} value={running.fraction ?? undefined} aria-label="Analysis progress" />
          <span role="status" data-testid="run-progress">
            {progressText(running.stage, running.fraction)}
            {running.step ? ` (${running.step})` : ''}
          </span>
          <button type="button" onClick={onCancel}>
            Cancel
          </button>
        </>
      ) : (
        <>
          <button type="button" className="primary" onClick={onRun} disabled={!canRun}>
            Run the analysis
          </button>
          {why ? <span className="status-error">{why}</span> : null}
        </>
      )}
    </div>
  );
}
