// IPC channel names between the preload and the main process: one channel per handler of the
// map (no open-ended "call anything" channel), plus the few host actions a window needs.
import { HANDLER_NAMES, type HandlerNameList } from '../src/api/handlerNames.js';

export const CALL_CHANNEL_PREFIX = 'manyfield:call:';
export const CANCEL_CHANNEL = 'manyfield:cancel';
/** main -> window: { callId, event } */
export const PROGRESS_CHANNEL = 'manyfield:progress';
/** main -> window: a menu command the screens act on */
export const MENU_CHANNEL = 'manyfield:menu';

export const HOST_ACTIONS = ['pickDataFile', 'pickWorkspace', 'recentWorkspaces', 'demoWorkspace', 'launchWorkspace', 'saveFile', 'printReport'] as const;
export type HostAction = (typeof HOST_ACTIONS)[number];
export const HOST_CHANNEL_PREFIX = 'manyfield:host:';

export function callChannel(name: HandlerNameList): string {
  return `${CALL_CHANNEL_PREFIX}${name}`;
}

export function hostChannel(action: HostAction): string {
  return `${HOST_CHANNEL_PREFIX}${action}`;
}

/** Every channel the window may invoke; nothing else is registered in main. */
export function invokeChannels(): string[] {
  return [...HANDLER_NAMES.map(callChannel), ...HOST_ACTIONS.map(hostChannel)];
}

export interface ProgressMessage {
  readonly callId: string;
  readonly event: { readonly stage: string; readonly step?: string; readonly fraction: number | null };
}

export type MenuCommand =
  | { readonly command: 'open-workspace'; readonly path: string }
  | { readonly command: 'new-workspace'; readonly path: string }
  | { readonly command: 'open-demo'; readonly path: string }
  | { readonly command: 'import-data' };
