// Finding serial ports. On Linux the serialport package asks udevadm, and without udevadm it takes the whole
// process down, so it is asked only when udevadm is present; otherwise (and if it fails) /dev and sysfs are
// scanned directly, reading the USB vendor and product the kernel exposes.
import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, readFileSync, realpathSync, statSync } from 'node:fs';
import path from 'node:path';

export interface PortInfo {
  path: string;
  /** USB vendor and product id, 4 hex digits each, when the port sits on a USB device. */
  vendorId: string | null;
  productId: string | null;
  manufacturer: string | null;
  product: string | null;
  serialNumber: string | null;
  /** What kind of port this is, in words. */
  kind: string;
  /** Where the information came from. */
  source: 'serialport' | 'sysfs';
}

export interface ListOptions {
  /** Roots to scan, for tests; default '/dev' and '/sys/class/tty'. */
  devRoot?: string;
  sysRoot?: string;
  /** Skip the serialport package even when udevadm is there. */
  scanOnly?: boolean;
}

function hasCommand(name: string): boolean {
  const r = spawnSync('sh', ['-c', `command -v ${name}`], { stdio: 'ignore' });
  return r.status === 0;
}

export async function listPorts(opts: ListOptions = {}): Promise<{ ports: PortInfo[]; notes: string[] }> {
  const notes: string[] = [];
  const linux = process.platform === 'linux';
  const mayAsk = !opts.scanOnly && (!linux || hasCommand('udevadm'));
  if (mayAsk) {
    try {
      const { SerialPort } = await import('serialport');
      const found = await SerialPort.list();
      return {
        ports: found.map((p) => ({
          path: p.path,
          vendorId: p.vendorId ?? null,
          productId: p.productId ?? null,
          manufacturer: p.manufacturer ?? null,
          product: null,
          serialNumber: p.serialNumber ?? null,
          kind: p.vendorId ? 'USB serial' : 'serial',
          source: 'serialport' as const,
        })),
        notes,
      };
    } catch (e) {
      notes.push(`the serialport package could not list ports (${(e as Error).message}); scanning /dev instead`);
    }
  } else if (linux && !opts.scanOnly) notes.push('udevadm is not installed: scanning /dev and sysfs instead');
  if (!linux && !existsSync(opts.devRoot ?? '/dev')) return { ports: [], notes: [...notes, 'no /dev directory to scan on this system'] };
  return { ports: scanDev(opts.devRoot ?? '/dev', opts.sysRoot ?? '/sys/class/tty'), notes };
}

const PATTERNS: { re: RegExp; kind: string }[] = [
  { re: /^ttyUSB\d+$/, kind: 'USB serial adapter' },
  { re: /^ttyACM\d+$/, kind: 'USB CDC-ACM device' },
  { re: /^ttyS\d+$/, kind: 'on-board or legacy UART' },
];

/** The /dev scan: ttyUSB*, ttyACM*, ttyS* (those with hardware behind them) and pseudo-terminals in pts/. */
export function scanDev(devRoot: string, sysRoot: string): PortInfo[] {
  const out: PortInfo[] = [];
  let names: string[] = [];
  try {
    names = readdirSync(devRoot);
  } catch {
    return out;
  }
  for (const name of names.sort(naturalOrder)) {
    const pattern = PATTERNS.find((p) => p.re.test(name));
    if (!pattern) continue;
    const sys = path.join(sysRoot, name);
    // The serial core reports type 0 for a ttyS line with no UART behind it: not a usable port.
    if (name.startsWith('ttyS') && readText(path.join(sys, 'type')) === '0') continue;
    out.push({ path: path.join(devRoot, name), ...usbInfo(sys), kind: pattern.kind, source: 'sysfs' });
  }
  const pts = path.join(devRoot, 'pts');
  try {
    for (const name of readdirSync(pts).filter((n) => /^\d+$/.test(n)).sort(naturalOrder)) {
      const p = path.join(pts, name);
      try {
        if (!statSync(p).isCharacterDevice()) continue;
      } catch {
        continue;
      }
      out.push({ path: p, vendorId: null, productId: null, manufacturer: null, product: null, serialNumber: null, kind: 'pseudo-terminal (e.g. socat or twinstep emulate)', source: 'sysfs' });
    }
  } catch {
    // no pts directory
  }
  return out;
}

/** Walk up from the tty's device in sysfs to the USB device that carries idVendor and idProduct. */
function usbInfo(sysTty: string): Pick<PortInfo, 'vendorId' | 'productId' | 'manufacturer' | 'product' | 'serialNumber'> {
  const none = { vendorId: null, productId: null, manufacturer: null, product: null, serialNumber: null };
  let dir: string;
  try {
    dir = realpathSync(path.join(sysTty, 'device'));
  } catch {
    return none;
  }
  for (let i = 0; i < 6 && dir !== path.dirname(dir); i++, dir = path.dirname(dir)) {
    const vendorId = readText(path.join(dir, 'idVendor'));
    if (vendorId) {
      return {
        vendorId,
        productId: readText(path.join(dir, 'idProduct')),
        manufacturer: readText(path.join(dir, 'manufacturer')),
        product: readText(path.join(dir, 'product')),
        serialNumber: readText(path.join(dir, 'serial')),
      };
    }
  }
  return none;
}

function readText(file: string): string | null {
  try {
    const t = readFileSync(file, 'utf8').trim();
    return t.length ? t : null;
  } catch {
    return null;
  }
}

function naturalOrder(a: string, b: string): number {
  return a.localeCompare(b, 'en', { numeric: true });
}
