// The IPC channels between the Electron renderer and main process: calls one way, job events the other.
// Kept free of imports so the sandboxed preload bundles to a few lines.
export const IPC_CHANNEL = 'twinstep';
export const IPC_EVENT_CHANNEL = 'twinstep-event';
