// Results cross every boundary (IPC, HTTP, CLI) as values, never as thrown errors.

export type ErrorCode =
  | 'invalid-argument'
  | 'invalid-input'
  | 'not-found'
  | 'conflict'
  | 'workspace-refused'
  | 'cancelled'
  | 'engine-failure'
  | 'internal';

export interface ApiError {
  readonly code: ErrorCode;
  readonly message: string;
  readonly details?: unknown;
}

export type Result<T> = { readonly ok: true; readonly data: T } | { readonly ok: false; readonly error: ApiError };

export function ok<T>(data: T): Result<T> {
  return { ok: true, data };
}

export function fail(code: ErrorCode, message: string, details?: unknown): Result<never> {
  return { ok: false, error: { code, message, details } };
}

/** An error carrying a code, thrown inside the core and turned into a Result at the boundary. */
export class ManyfieldError extends Error {
  constructor(readonly code: ErrorCode, message: string, readonly details?: unknown) {
    super(message);
    this.name = 'ManyfieldError';
  }
}

/** Unwrap a Result, throwing a ManyfieldError (the throwing entry point). */
export function unwrap<T>(r: Result<T>): T {
  if (r.ok) return r.data;
  throw new ManyfieldError(r.error.code, r.error.message, r.error.details);
}
