// `twinstep ports [--json]`: the serial ports of this machine, with USB vendor and product where known.
// Works without udevadm (falls back to scanning /dev and sysfs).
import { EXIT, parseOptions, type CliIO } from '../cli-io';
import { listPorts } from '../serial/list';
import { jsonLine } from '../serial/session';

const USAGE = 'usage: twinstep ports [--json]\n';

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help', 'json', 'scan'] });
  if (opts.flags.has('help')) {
    io.out(USAGE);
    return EXIT.ok;
  }
  if (opts.problems.length || opts.positionals.length) {
    for (const p of opts.problems) io.err(`twinstep ports: ${p}\n`);
    io.err(USAGE);
    return EXIT.usage;
  }
  const { ports, notes } = await listPorts({ scanOnly: opts.flags.has('scan') });
  if (opts.flags.has('json')) {
    for (const p of ports) io.out(jsonLine(p));
    for (const n of notes) io.err(`twinstep ports: note: ${n}\n`);
    return EXIT.ok;
  }
  for (const n of notes) io.err(`twinstep ports: note: ${n}\n`);
  if (ports.length === 0) {
    io.out('no serial ports found (is the USB-UART adapter plugged in?)\n');
    return EXIT.ok;
  }
  const width = Math.max(...ports.map((p) => p.path.length));
  for (const p of ports) {
    const usb = p.vendorId ? `USB ${p.vendorId}:${p.productId ?? '????'}` : '';
    const words = [p.manufacturer, p.product].filter(Boolean).join(' ');
    const serial = p.serialNumber ? `serial ${p.serialNumber}` : '';
    io.out(`${p.path.padEnd(width)}  ${[usb, words, serial, p.kind].filter(Boolean).join('  ')}\n`);
  }
  return EXIT.ok;
}
