// The one IPC channel between the Electron renderer and main process. Kept free of imports so the
// sandboxed preload bundles to a few lines.
export const IPC_CHANNEL = 'twinstep';
