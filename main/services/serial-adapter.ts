// Serial ports for bench sessions, through main/serial: the port listing (which works without udevadm) and
// the byte stream of an open port. Null when the serial modules cannot load (the emulated board still works).
import type { HandlerContext } from './handlers';

/** What a bench session needs of an open port (main/serial/port.ts SerialLink). */
export interface SerialStream {
  onData(cb: (bytes: Uint8Array) => void): void;
  onLost(cb: (why: string) => void): void;
  write(bytes: Uint8Array): Promise<void>;
  close(): Promise<void>;
}

export async function loadSerial(): Promise<HandlerContext['serial']> {
  try {
    const list = await import('../serial/list');
    const port = await import('../serial/port');
    return {
      async list() {
        const r = await list.listPorts();
        return {
          ports: r.ports.map((p) => ({ path: p.path, description: [p.kind, p.manufacturer, p.product].filter(Boolean).join(', ') })),
          note: r.notes.length ? r.notes.join('; ') : null,
        };
      },
      async open(path: string, baud: number) {
        const r = await port.openSerial(path, baud);
        if (!r.ok) throw new Error(r.error);
        return r.link;
      },
    };
  } catch {
    return null;
  }
}
