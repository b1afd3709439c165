// The host reaches every screen through context; screens never import a host implementation.
import { createContext, useContext } from 'react';
import type { Host } from '../host/types.js';

export const HostContext = createContext<Host | null>(null);

export function useHost(): Host {
  const host = useContext(HostContext);
  if (!host) throw new Error('no host: the app must be mounted inside HostContext');
  return host;
}
