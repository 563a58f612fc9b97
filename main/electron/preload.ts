// Preload of the sandboxed renderer: exposes exactly one object, window.twinstep, which forwards calls over
// IPC and delivers job events pushed by the main process. No Node access reaches the page.
import { contextBridge, ipcRenderer, type IpcRendererEvent } from 'electron';
import type { TwinstepBridge } from '../../core/services/api';
import { IPC_CHANNEL, IPC_EVENT_CHANNEL } from './channel';

const bridge: TwinstepBridge = Object.freeze({
  call: (request: unknown) => ipcRenderer.invoke(IPC_CHANNEL, request),
  onEvent: (listener: (event: unknown) => void) => {
    // The page gets the payload only, never the IPC event object (it carries the sender).
    const wrapped = (_e: IpcRendererEvent, payload: unknown) => listener(payload);
    ipcRenderer.on(IPC_EVENT_CHANNEL, wrapped);
    return () => void ipcRenderer.removeListener(IPC_EVENT_CHANNEL, wrapped);
  },
});

contextBridge.exposeInMainWorld('twinstep', bridge);
