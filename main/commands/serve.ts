// `twinstep serve`: runs the app for a browser on 127.0.0.1 until interrupted, printing the address
// (with this run's token) to open. Builds the renderer first when its sources are newer than the build.
import { EXIT, parseOptions, type CliIO } from '../cli-io';
import { createHandlers } from '../services/handlers';
import { JobManager } from '../services/jobs';
import { APP_VERSION, appRoot, captureDir, demoDir, rendererDist } from '../services/paths';
import { loadSerial } from '../services/serial-adapter';
import { ensureRendererBuilt } from '../services/renderer-build';
import { startServer, type RunningServer } from '../services/server';

const HELP = `usage: twinstep serve [--port N]

Serves the Twinstep app on http://127.0.0.1 only, until Ctrl-C.
  --port N   listen on port N (1-65535); default: a random free port

The printed address carries a token made for this run; the app refuses requests without it.
`;

/** Parses --port; null with a message when it is not a port number. */
export function parsePort(text: string | undefined): { port: number } | { problem: string } {
  if (text === undefined) return { port: 0 };
  if (!/^\d{1,5}$/.test(text) || Number(text) < 1 || Number(text) > 65535) return { problem: `--port: '${text}' is not a port number (1-65535)` };
  return { port: Number(text) };
}

export interface ServeExtras {
  /** Capture folder; default TWINSTEP_CAPTURES or ~/Twinstep/captures. */
  captureDir?: string;
}

/** Starts serve mode for other entry points (npm start); the caller owns closing it. */
export async function startServe(port: number, io: Pick<CliIO, 'err'>, extras: ServeExtras = {}): Promise<RunningServer> {
  const root = appRoot();
  const jobs = new JobManager();
  const handlers = createHandlers({ shell: 'serve', version: APP_VERSION, demoDir: demoDir(root), captureDir: extras.captureDir ?? captureDir(), jobs, serial: await loadSerial() });
  // Bind first, so a taken port is reported at once rather than after a build.
  const server = await startServer({ handlers, staticDir: rendererDist(root), port, jobs });
  try {
    await ensureRendererBuilt(root, io.err);
  } catch (e) {
    await server.close();
    throw new Error(`the renderer could not be built: ${e instanceof Error ? e.message : String(e)}`);
  }
  return server;
}

export async function run(argv: string[], io: CliIO): Promise<number> {
  const opts = parseOptions(argv, { flags: ['help'], values: ['port'] });
  if (opts.flags.has('help')) {
    io.out(HELP);
    return EXIT.ok;
  }
  const port = parsePort(opts.values.get('port'));
  const problems = [...opts.problems, ...(opts.positionals.length ? [`unexpected argument '${opts.positionals[0]}'`] : []), ...('problem' in port ? [port.problem] : [])];
  if (problems.length || 'problem' in port) {
    io.err(problems.map((p) => `twinstep serve: ${p}\n`).join('') + HELP);
    return EXIT.usage;
  }
  let server: RunningServer;
  try {
    server = await startServe(port.port, io);
  } catch (e) {
    const err = e as NodeJS.ErrnoException;
    io.err(`twinstep serve: cannot start: ${err.code === 'EADDRINUSE' ? `port ${port.port} is in use; pick another with --port or leave it out for a random one` : err.message}\n`);
    return EXIT.errors;
  }
  io.out(`Twinstep is serving on 127.0.0.1 only. Open:\n  ${server.url}\nStop with Ctrl-C.\n`);
  await (io.interrupted ?? new Promise<void>(() => {}));
  await server.close();
  io.out('stopped.\n');
  return EXIT.ok;
}
