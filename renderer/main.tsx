// Entry point of the screens: picks the host the page runs in and mounts the app.
import { createRoot } from 'react-dom/client';

const root = document.getElementById('root');
if (root) createRoot(root).render(<p>Manyfield</p>);
