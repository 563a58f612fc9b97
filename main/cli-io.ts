// What a CLI command may touch: its arguments, output streams and the working directory.
// Commands take this instead of using process directly, so tests can run them in-process.

export interface CliIO {
  out(text: string): void;
  err(text: string): void;
  cwd: string;
  /** Resolves when the user asks to stop (Ctrl-C); commands that run until stopped listen to it. */
  interrupted?: Promise<void>;
}

export type Command = (argv: string[], io: CliIO) => Promise<number>;

/** Exit codes shared by all commands. */
export const EXIT = { ok: 0, errors: 1, usage: 2, divergences: 3 } as const;

/** Minimal option parser: --flag, --key value, --key=value; the rest are positionals. */
export function parseOptions(argv: string[], spec: { flags?: string[]; values?: string[] }): { positionals: string[]; flags: Set<string>; values: Map<string, string>; problems: string[] } {
  const flags = new Set<string>();
  const values = new Map<string, string>();
  const positionals: string[] = [];
  const problems: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a.startsWith('--')) {
      const eq = a.indexOf('=');
      const key = eq >= 0 ? a.slice(2, eq) : a.slice(2);
      if (spec.flags?.includes(key)) {
        if (eq >= 0) problems.push(`--${key} takes no value`);
        flags.add(key);
      } else if (spec.values?.includes(key)) {
        const v = eq >= 0 ? a.slice(eq + 1) : argv[++i];
        if (v === undefined || (eq < 0 && v.startsWith('--'))) problems.push(`--${key} needs a value`);
        else values.set(key, v);
      } else problems.push(`unknown option --${key}`);
    } else positionals.push(a);
  }
  return { positionals, flags, values, problems };
}

/** Prints each usage problem prefixed with the command's name, then the usage text; returns the usage exit code. */
export function usageFailure(io: CliIO, who: string, problems: readonly string[], usage: string): number {
  for (const p of problems) io.err(`${who}: ${p}\n`);
  io.err(usage);
  return EXIT.usage;
}
