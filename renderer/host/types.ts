// The one interface the screens use to reach the core, whichever shell they run in (the
// Electron window or the browser mode). Types only come from src/; no implementation.
import type { HandlerArgs, HandlerName, HandlerResults } from '../../src/api/handlers.js';
import type { ProgressEvent } from '../../src/api/context.js';
import type { Result } from '../../src/api/result.js';

export type { HandlerArgs, HandlerName, HandlerResults, ProgressEvent, Result };

export interface CallOptions {
  readonly onProgress?: (e: ProgressEvent) => void;
  readonly signal?: AbortSignal;
}

export interface PickedFile {
  readonly ref: string;
  readonly name: string;
}

export interface RecentWorkspace {
  readonly path: string;
  readonly name: string;
  readonly openedAt: string;
}

export interface Host {
  readonly kind: 'electron' | 'browser';
  /**
   * True when the page chooses files itself with an <input type=file> and hands them over
   * with uploadDataFile (the browser); false when the shell shows its own dialog (pickDataFile).
   */
  readonly choosesFilesInPage: boolean;
  call<K extends HandlerName>(name: K, args: HandlerArgs<K>, opts?: CallOptions): Promise<Result<HandlerResults[K]>>;
  pickDataFile(): Promise<PickedFile | null>;
  uploadDataFile(file: File): Promise<PickedFile>;
  /** 'new': a workspace named `name` in the shell's workspace folder (or a save dialog); 'open': a path typed or chosen. */
  pickWorkspace(mode: 'open' | 'new', name?: string): Promise<string | null>;
  recentWorkspaces(): Promise<RecentWorkspace[]>;
  demoWorkspace(): Promise<string>;
  /** The workspace the shell was launched on, if any. */
  launchWorkspace(): Promise<string | null>;
  saveFile(name: string, data: Blob | string): Promise<void>;
  /** The report's HTML printed to PDF by the shell's own engine (Electron); absent where the core prints it. */
  printReport?(html: string): Promise<Uint8Array<ArrayBuffer>>;
  /** Commands from the shell's own menu (Electron); the browser mode has none. */
  onMenu?(listener: (command: ShellCommand) => void): () => void;
}

/** A menu command of the shell: open a workspace it chose, or go to intake. */
export type ShellCommand = { readonly command: 'open-workspace' | 'new-workspace' | 'open-demo'; readonly path: string } | { readonly command: 'import-data' };
