// The twinstep command line: a thin dispatcher over command modules in main/commands/.
// Each command is loaded on demand so that a slow or missing module never delays the others.
import type { CliIO, Command } from './cli-io';

export const COMMANDS: Record<string, { summary: string; load: () => Promise<{ run: Command }> }> = {
  check: { summary: 'check a design file and print diagnostics', load: () => loadCommand('check') },
  sim: { summary: 'simulate a design on a stimulus and print the cycle trace', load: () => loadCommand('sim') },
  synth: { summary: 'controller/datapath synthesis: tables, encodings, equations', load: () => loadCommand('synth') },
  gen: { summary: 'generate Verilog (and the UART probe) for a design', load: () => loadCommand('gen') },
  demo: { summary: 'check and simulate the bundled demo design', load: () => loadCommand('demo') },
  serve: { summary: 'serve the app to a browser on 127.0.0.1', load: () => loadCommand('serve') },
  monitor: { summary: 'compare a board with the model live over a serial port, optionally recording a capture', load: () => loadCommand('monitor') },
  replay: { summary: 'compare a recorded capture with the model; VCD and replay testbench exports', load: () => loadCommand('replay') },
  ports: { summary: 'list serial ports (USB vendor and product where known)', load: () => loadCommand('ports') },
  emulate: { summary: 'emulate a board running the design with the probe on a serial device', load: () => loadCommand('emulate') },
};

/** Commands live in main/commands/NAME.ts; the path is computed so a command can be added without touching this file's types. */
function loadCommand(name: string): Promise<{ run: Command }> {
  return import(`./commands/${name}.ts`) as Promise<{ run: Command }>;
}

export function usage(): string {
  const lines = ['usage: twinstep COMMAND [options]', '', 'commands:'];
  for (const [name, c] of Object.entries(COMMANDS)) lines.push(`  ${name.padEnd(10)} ${c.summary}`);
  lines.push('', 'Run twinstep COMMAND --help for the options of one command.');
  return lines.join('\n') + '\n';
}

export async function runCli(argv: string[], io: CliIO): Promise<number> {
  const [name, ...rest] = argv;
  if (!name || name === '--help' || name === '-h' || name === 'help') {
    io.out(usage());
    return name ? 0 : 2;
  }
  const cmd = COMMANDS[name];
  if (!cmd) {
    io.err(`twinstep: unknown command '${name}'\n${usage()}`);
    return 2;
  }
  let mod: { run: Command };
  try {
    mod = await cmd.load();
  } catch (e) {
    io.err(`twinstep: command '${name}' is not available in this build (${(e as Error).message})\n`);
    return 2;
  }
  return mod.run(rest, io);
}

const isMain = process.argv[1] && /cli\.(ts|js)$/.test(process.argv[1]);
if (isMain) {
  const io: CliIO = {
    out: (t) => process.stdout.write(t),
    err: (t) => process.stderr.write(t),
    cwd: process.cwd(),
    interrupted: new Promise((resolve) => process.once('SIGINT', () => resolve())),
  };
  runCli(process.argv.slice(2), io).then(
    (code) => {
      process.exitCode = code;
    },
    (e) => {
      process.stderr.write(`twinstep: internal error: ${(e as Error).stack ?? e}\n`);
      process.exitCode = 70;
    },
  );
}
