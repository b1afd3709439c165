// Plain status lines: loading, failed (with the message), empty.
import type { ReactNode } from 'react';
import type { Loaded } from '../app/useLoad.js';

export function Loading({ what }: { what: string }) {
  return (
    <p className="status" role="status">
      Loading {what}…
    </p>
  );
}

export function Failure({ message }: { message: string }) {
  return (
    <p className="status status-error" role="alert">
      {message}
    </p>
  );
}

/** Renders the loaded value, or a loading/failure line. */
export function WhenLoaded<T>({ state, what, children }: { state: Loaded<T>; what: string; children: (data: T) => ReactNode }) {
  if (state.status === 'loading') return <Loading what={what} />;
  if (state.status === 'failed') return <Failure message={state.message} />;
  return <>{children(state.data)}</>;
}
