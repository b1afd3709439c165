// Any error from the core becomes a structured ApiError at the boundary.
import { IntakeError } from '../intake/types.js';
import { ManyfieldError, type ApiError } from './result.js';

/** Errors from other layers that carry a code of their own (the store's typed errors). */
interface CodedError {
  readonly code: string;
  readonly message: string;
  readonly details?: unknown;
}

const ENGINE_INPUT_ERRORS = new Set(['PoolingInputError', 'RateResponseInputError', 'TrialInputError', 'OneStageDataError', 'ContrastDefinitionError']);

const KNOWN_CODES = new Set(['invalid-argument', 'invalid-input', 'not-found', 'conflict', 'workspace-refused', 'cancelled', 'engine-failure', 'internal']);

export function toApiError(e: unknown): ApiError {
  if (e instanceof ManyfieldError) return { code: e.code, message: e.message, details: e.details };
  // Engines signal cancellation with their own errors (AbortSignal.throwIfAborted, the REML loop).
  if (e instanceof Error && (e.name === 'AbortError' || e.name === 'OneStageCancelledError'))
    return { code: 'cancelled', message: 'cancelled by the user; nothing was stored' };
  if (e instanceof IntakeError) return { code: 'invalid-input', message: e.message, details: { problems: e.problems, truncated: e.truncated } };
  // The engine's refusals of what it was given (a factor not in the network, nothing to pool)
  // are the user's input to fix, not a fault of the program.
  if (e instanceof Error && ENGINE_INPUT_ERRORS.has(e.name)) return { code: 'invalid-input', message: e.message, details: { name: e.name } };
  const coded = e as Partial<CodedError> | null;
  if (e instanceof Error && typeof coded?.code === 'string' && KNOWN_CODES.has(coded.code)) {
    const c = e as unknown as CodedError;
    return { code: c.code as ApiError['code'], message: c.message, details: c.details };
  }
  if (e instanceof Error) return { code: 'internal', message: e.message, details: { name: e.name, stack: e.stack } };
  return { code: 'internal', message: String(e) };
}
