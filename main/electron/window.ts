// The desktop window's settings in one place, kept free of Electron imports so tests can check the
// security switches that must never be turned off.

export function windowOptions(preloadPath: string) {
  return {
    width: 1400,
    height: 900,
    minWidth: 900,
    minHeight: 600,
    title: 'Twinstep',
    backgroundColor: '#101418',
    show: false,
    webPreferences: {
      preload: preloadPath,
      contextIsolation: true,
      nodeIntegration: false,
      nodeIntegrationInWorker: false,
      sandbox: true,
      webSecurity: true,
      allowRunningInsecureContent: false,
      webviewTag: false,
      spellcheck: false,
    },
  } as const;
}
