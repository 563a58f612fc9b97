// Runs the CLI in-process with captured output, the way a user would see it.
import { runCli } from '../../main/cli';
import { ROOT } from './load';

export async function cli(args: string[], cwd = ROOT): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await runCli(args, { out: (t) => (out += t), err: (t) => (err += t), cwd });
  return { code, out, err };
}
