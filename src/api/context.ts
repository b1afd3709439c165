// What a long operation receives from its caller: a progress sink and a cancellation signal.
// The CLI draws a bar from the events; the screens will show the same events.
import { ManyfieldError } from './result.js';

export interface ProgressEvent {
  /** Coarse stage: "read", "store", "trial-stage", "one-stage", "pooling", "rate-response". */
  readonly stage: string;
  /** Finer step inside the stage, e.g. a trial key or an iteration number. */
  readonly step?: string;
  /** 0..1 when known, null when the amount of work is not known in advance. */
  readonly fraction: number | null;
}

export interface CallContext {
  readonly onProgress?: (event: ProgressEvent) => void;
  readonly signal?: AbortSignal;
  /**
   * In-process callers only: receives the finished result before anything is stored. If it
   * throws (an output file that cannot be written), the operation fails and stores nothing.
   */
  readonly deliver?: (result: unknown) => void | Promise<void>;
}

export function throwIfCancelled(ctx: CallContext | undefined): void {
  if (ctx?.signal?.aborted) throw new ManyfieldError('cancelled', 'cancelled by the user; nothing was stored');
}
