// Bad options or data for the rate-response analysis: a clear message naming what broke.
export class RateResponseInputError extends Error {
  constructor(message: string, readonly details?: Record<string, unknown>) {
    super(message);
    this.name = 'RateResponseInputError';
  }
}
