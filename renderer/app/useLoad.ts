// Loading one handler's answer for a screen, with a reload and no update after unmount.
import { useCallback, useEffect, useRef, useState } from 'react';
import type { Result } from '../host/types.js';

export type Loaded<T> =
  | { readonly status: 'loading' }
  | { readonly status: 'ready'; readonly data: T }
  | { readonly status: 'failed'; readonly message: string };

/** The load receives a signal that aborts when its inputs change or the screen goes away. */
export function useLoad<T>(load: (signal: AbortSignal) => Promise<Result<T>>, deps: readonly unknown[]): [Loaded<T>, () => void] {
  const [state, setState] = useState<Loaded<T>>({ status: 'loading' });
  const [version, setVersion] = useState(0);
  const loadRef = useRef(load);
  loadRef.current = load;
  useEffect(() => {
    let live = true;
    const controller = new AbortController();
    loadRef.current(controller.signal).then(
      (r) => live && setState(r.ok ? { status: 'ready', data: r.data } : { status: 'failed', message: r.error.message }),
      (e: unknown) => live && setState({ status: 'failed', message: String(e) }),
    );
    return () => {
      live = false;
      controller.abort();
    };
    // eslint-disable-next-line react-hooks/exhaustive-deps -- the caller names what the load depends on
  }, [...deps, version]);
  const reload = useCallback(() => setVersion((v) => v + 1), []);
  return [state, reload];
}
