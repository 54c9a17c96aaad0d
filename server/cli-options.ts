/**
 * The small option reader of `shaftnet keys`, `backup` and `restore`:
 * `--name VALUE` or `--name=VALUE`, flags without a value, and positionals.
 */

/** A mistake in the command line; the CLI prints it with the usage. */
export class CliUsageError extends Error {}

export interface ParsedArgs {
  readonly values: Map<string, string>;
  readonly flags: Set<string>;
  readonly positionals: string[];
}

/** Reads `args`; `valued` are the options that take a value, `flags` those that do not. */
export function parseArgs(args: readonly string[], valued: readonly string[], flags: readonly string[]): ParsedArgs {
  const out: ParsedArgs = { values: new Map(), flags: new Set(), positionals: [] };
  for (let k = 0; k < args.length; k++) {
    const a = args[k];
    if (a.startsWith('--')) {
      const eq = a.indexOf('=');
      const name = eq < 0 ? a : a.slice(0, eq);
      if (valued.includes(name)) {
        const v = eq < 0 ? args[++k] : a.slice(eq + 1);
        if (v === undefined || v === '') throw new CliUsageError(`${name} takes a value`);
        if (out.values.has(name)) throw new CliUsageError(`${name} is given twice`);
        out.values.set(name, v);
      } else if (flags.includes(name) && eq < 0) out.flags.add(name);
      else throw new CliUsageError(`unknown option ${a}`);
    } else out.positionals.push(a);
  }
  return out;
}

/** The library directory: --data, else SHAFTNET_DATA; one of them is required. */
export function dataDirOf(parsed: ParsedArgs, env: NodeJS.ProcessEnv = process.env): string {
  const dir = parsed.values.get('--data') ?? env.SHAFTNET_DATA;
  if (dir === undefined || dir === '') throw new CliUsageError('name the library directory with --data DIR (or SHAFTNET_DATA)');
  return dir;
}
