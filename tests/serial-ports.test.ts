// `twinstep ports` without udevadm: the /dev and sysfs scan on a tree laid out here the way the Linux kernel
// lays out /sys/class/tty (a tty's `device` link into the USB device tree, idVendor/idProduct/manufacturer/
// product/serial files on the USB device, `type` 0 for a ttyS line with no UART; kernel sysfs ABI, quoted
// from memory), and the real command in a process whose PATH has no udevadm.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, realpathSync, symlinkSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { scanDev } from '../main/serial/list';
import { ROOT } from './support/load';
import { requireTool, tempDir } from './support/tools';

function fakeTree() {
  const root = tempDir('ports');
  const dev = path.join(root, 'dev');
  const sys = path.join(root, 'sys', 'class', 'tty');
  const usb = path.join(root, 'sys', 'devices', 'pci0000:00', 'usb1', '1-2');
  mkdirSync(path.join(dev, 'pts'), { recursive: true });
  mkdirSync(sys, { recursive: true });
  // A USB serial adapter: the tty's device is an interface below the USB device that has the ids.
  mkdirSync(path.join(usb, '1-2:1.0', 'ttyUSB0'), { recursive: true });
  writeFileSync(path.join(usb, 'idVendor'), '0403\n');
  writeFileSync(path.join(usb, 'idProduct'), '6001\n');
  writeFileSync(path.join(usb, 'manufacturer'), 'FTDI\n');
  writeFileSync(path.join(usb, 'product'), 'FT232R USB UART\n');
  writeFileSync(path.join(usb, 'serial'), 'A50285BI\n');
  mkdirSync(path.join(sys, 'ttyUSB0'));
  symlinkSync(path.join(usb, '1-2:1.0', 'ttyUSB0'), path.join(sys, 'ttyUSB0', 'device'));
  // Two legacy lines: ttyS0 with a UART (type 4), ttyS1 without (type 0).
  for (const [name, type] of [['ttyS0', '4'], ['ttyS1', '0']]) {
    mkdirSync(path.join(sys, name));
    writeFileSync(path.join(sys, name, 'type'), `${type}\n`);
  }
  // A CDC-ACM device with no sysfs entry at all (ids unknown), and files that are not serial ports.
  for (const name of ['ttyUSB0', 'ttyS0', 'ttyS1', 'ttyACM0', 'tty0', 'null']) writeFileSync(path.join(dev, name), '');
  return { dev, sys };
}

describe('port listing', () => {
  it('scans /dev and sysfs: USB ids and strings where the kernel gives them, no phantom ttyS lines', () => {
    const { dev, sys } = fakeTree();
    const ports = scanDev(dev, sys);
    expect(ports.map((p) => path.basename(p.path))).toEqual(['ttyACM0', 'ttyS0', 'ttyUSB0']);
    expect(ports.find((p) => p.path.endsWith('ttyUSB0'))).toMatchObject({ vendorId: '0403', productId: '6001', manufacturer: 'FTDI', product: 'FT232R USB UART', serialNumber: 'A50285BI', kind: 'USB serial adapter' });
    expect(ports.find((p) => p.path.endsWith('ttyACM0'))).toMatchObject({ vendorId: null, kind: 'USB CDC-ACM device' });
  });

  it('lists a pseudo-terminal that socat has just made', async () => {
    requireTool('socat');
    const dir = tempDir('pts');
    const link = path.join(dir, 'a');
    const socat = spawn('socat', [`PTY,link=${link},raw,echo=0`, `PTY,link=${path.join(dir, 'b')},raw,echo=0`], { stdio: 'ignore' });
    try {
      for (let t = 0; t < 200 && !existsSync(link); t++) await new Promise((r) => setTimeout(r, 50));
      const pts = realpathSync(link);
      expect(pts).toMatch(/^\/dev\/pts\/\d+$/);
      expect(scanDev('/dev', '/sys/class/tty').find((p) => p.path === pts)?.kind).toMatch(/pseudo-terminal/);
    } finally {
      socat.kill('SIGTERM');
    }
  });

  it('runs without udevadm on the PATH, and says so, instead of crashing', () => {
    const bin = tempDir('nobin');
    // Only a shell and node: no udevadm.
    symlinkSync('/bin/sh', path.join(bin, 'sh'));
    symlinkSync(process.execPath, path.join(bin, 'node'));
    const r = spawnSync(path.join(bin, 'node'), ['--import', 'tsx', 'main/cli.ts', 'ports'], { cwd: ROOT, env: { PATH: bin, HOME: process.env.HOME ?? '/tmp' }, encoding: 'utf8', timeout: 60_000 });
    expect(r.status).toBe(0);
    expect(r.stderr).toMatch(/udevadm is not installed: scanning \/dev and sysfs instead/);
  });
});
