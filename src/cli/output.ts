/** Where the command line writes: results to stdout, messages and progress to stderr. */
export interface CliIO {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
}

export const processIO: CliIO = {
  stdout: (s) => process.stdout.write(s),
  stderr: (s) => process.stderr.write(s),
};

export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** Minimal option parser: positional arguments plus --name value / --flag options. */
export function parseArgs(
  args: string[],
  spec: { values?: string[]; flags?: string[] },
): { positional: string[]; values: Record<string, string>; flags: Set<string> } {
  const positional: string[] = [];
  const values: Record<string, string> = {};
  const flags = new Set<string>();
  for (let i = 0; i < args.length; i++) {
    const a = args[i];
    if (a.startsWith('--')) {
      const [name, inline] = a.slice(2).split(/=(.*)/s, 2);
      if (spec.values?.includes(name)) {
        const v = inline ?? args[++i];
        if (v === undefined) throw new UsageError(`option --${name} needs a value`);
        values[name] = v;
      } else if (spec.flags?.includes(name)) {
        flags.add(name);
      } else {
        throw new UsageError(`unknown option --${name}`);
      }
    } else positional.push(a);
  }
  return { positional, values, flags };
}
