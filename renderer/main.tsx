// Entry point of the screens: picks the host the page runs in and mounts the app.
import { StrictMode } from 'react';
import { createRoot } from 'react-dom/client';
import { HostContext } from './app/hostContext.js';
import { App } from './app/App.js';
import { pickHost } from './host/pickHost.js';

const root = document.getElementById('root');
if (root)
  createRoot(root).render(
    <StrictMode>
      <HostContext.Provider value={pickHost()}>
        <App />
      </HostContext.Provider>
    </StrictMode>,
  );
