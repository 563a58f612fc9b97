// Preload of the sandboxed renderer: exposes exactly one object, window.twinstep, whose single
// method forwards a message over IPC. No Node access reaches the page.
import { contextBridge, ipcRenderer } from 'electron';
import type { TwinstepBridge } from '../../core/services/api';
import { IPC_CHANNEL } from './channel';

const bridge: TwinstepBridge = Object.freeze({
  call: (request: unknown) => ipcRenderer.invoke(IPC_CHANNEL, request),
});

contextBridge.exposeInMainWorld('twinstep', bridge);
