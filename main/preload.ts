// The preload (sandboxed, context-isolated): exposes window.manyfield and nothing else.
import { contextBridge, ipcRenderer } from 'electron';
import { buildBridge } from './bridge.js';

contextBridge.exposeInMainWorld('manyfield', buildBridge(ipcRenderer));
