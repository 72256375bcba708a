// The command-line interface's plumbing: each command is a small object; main.ts dispatches.
// Commands never write to process streams directly, so tests can run them in-process.

export interface CliIO {
  out(s: string): void;
  err(s: string): void;
  /** Throws a readable error (ENOENT etc.) when the file cannot be read. */
  readFile(path: string): string;
  writeFile(path: string, data: string): void;
  isTTY: boolean;
  /** Current working directory, for relative paths in messages. */
  cwd: string;
}

export interface CliCommand {
  name: string;
  summary: string;
  /** Full help text shown by `loopwright NAME --help`. */
  usage: string;
  run(args: string[], io: CliIO): Promise<number>;
}

/** Exit codes shared by every command. */
export const EXIT_OK = 0;
export const EXIT_FAIL = 1;
export const EXIT_USAGE = 2;

export class UsageError extends Error {}

export interface ParsedArgs {
  positional: string[];
  flags: Map<string, string | true>;
}

/**
 * Parses `--flag`, `--flag value` and `--flag=value`. `valued` names flags that take a value;
 * any flag not in `valued` or `booleans` is a usage error.
 */
export function parseArgs(args: string[], spec: { valued?: string[]; booleans?: string[] }): ParsedArgs {
  const valued = new Set(spec.valued ?? []);
  const booleans = new Set([...(spec.booleans ?? []), 'help']);
  const positional: string[] = [];
  const flags = new Map<string, string | true>();
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    if (a === '-h') {
      flags.set('help', true);
      continue;
    }
    if (!a.startsWith('--') || a === '--') {
      positional.push(a);
      continue;
    }
    const eq = a.indexOf('=');
    const name = a.slice(2, eq < 0 ? undefined : eq);
    if (valued.has(name)) {
      const value = eq >= 0 ? a.slice(eq + 1) : args[++i];
      if (value === undefined || (eq < 0 && value.startsWith('--'))) throw new UsageError(`option --${name} needs a value`);
      flags.set(name, value);
    } else if (booleans.has(name)) {
      if (eq >= 0) throw new UsageError(`option --${name} takes no value`);
      flags.set(name, true);
    } else {
      throw new UsageError(`unknown option --${name}`);
    }
  }
  return { positional, flags };
}

export function flagString(p: ParsedArgs, name: string): string | undefined {
  const v = p.flags.get(name);
  return typeof v === 'string' ? v : undefined;
}
