// A serial port as the commands need it: open with a clear message for each way it can fail, write with
// back-pressure, and one callback when the port goes away (unplugged adapter, closed peer, I/O error).
import { SerialPort } from 'serialport';

export interface SerialLink {
  readonly path: string;
  onData(cb: (bytes: Uint8Array) => void): void;
  /** Called once when the port closes or fails on its own (not after `close()`), with a sentence saying why. */
  onLost(cb: (why: string) => void): void;
  /** Resolves once the bytes are handed to the operating system. Rejects when the port is gone. */
  write(bytes: Uint8Array): Promise<void>;
  close(): Promise<void>;
}

export type OpenResult = { ok: true; link: SerialLink } | { ok: false; error: string };

/** Why an open failed, in words a bench user can act on. */
export function openErrorText(path: string, e: unknown): string {
  const msg = e instanceof Error ? e.message : String(e);
  if (/ENOENT|No such file/i.test(msg)) return `${path}: no such serial port (is the adapter plugged in? \`twinstep ports\` lists the ports)`;
  if (/EACCES|Permission denied/i.test(msg)) return `${path}: permission denied (on Linux, add yourself to the 'dialout' group and log in again)`;
  if (/EBUSY|Resource busy|Cannot lock/i.test(msg)) return `${path}: the port is in use by another program`;
  if (/Is a directory|ENOTTY|Inappropriate ioctl/i.test(msg)) return `${path}: not a serial port (${msg})`;
  return `${path}: cannot open the serial port: ${msg}`;
}

export function openSerial(path: string, baudRate: number): Promise<OpenResult> {
  return new Promise((resolve) => {
    let port: SerialPort;
    try {
      port = new SerialPort({ path, baudRate, autoOpen: false });
    } catch (e) {
      resolve({ ok: false, error: openErrorText(path, e) });
      return;
    }
    port.open((err) => {
      if (err) {
        resolve({ ok: false, error: openErrorText(path, err) });
        return;
      }
      resolve({ ok: true, link: wrap(port, path) });
    });
  });
}

function wrap(port: SerialPort, path: string): SerialLink {
  let closing = false;
  let lost: ((why: string) => void) | null = null;
  let lostReported = false;
  const report = (why: string) => {
    if (closing || lostReported) return;
    lostReported = true;
    lost?.(why);
  };
  port.on('error', (e: Error) => report(`${path}: the port failed: ${e.message}`));
  port.on('close', (e?: Error & { disconnected?: boolean }) => {
    if (e?.disconnected) report(`${path}: the port went away (adapter unplugged, cable pulled, or the other end closed): ${e.message}`);
    else report(`${path}: the port was closed`);
  });
  return {
    path,
    onData: (cb) => port.on('data', (b: Buffer) => cb(new Uint8Array(b.buffer, b.byteOffset, b.length))),
    onLost: (cb) => {
      lost = cb;
    },
    write: (bytes) =>
      new Promise((resolve, reject) => {
        if (closing || !port.isOpen) {
          reject(new Error(`${path}: the port is not open`));
          return;
        }
        const more = port.write(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.length), (err) => {
          if (err) reject(err);
        });
        if (more) resolve();
        else port.once('drain', () => resolve());
      }),
    close: () =>
      new Promise((resolve) => {
        closing = true;
        if (!port.isOpen) {
          resolve();
          return;
        }
        port.close(() => resolve());
      }),
  };
}
